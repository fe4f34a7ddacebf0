import { fail, redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { ServiceError, type FieldErrors } from '$lib/server/errors';
import { findingCounts, listFindings, parseFilters, raiseFinding } from '$lib/server/findings/service';
import { projectMembers, requirementOptions } from '$lib/server/requirements/service';
import {
	CAUSE_LABELS,
	FINDING_CAUSES,
	FINDING_LOOK,
	FINDING_STATES,
	OPEN_FINDING_STATES
} from '$lib/verification';
import type { Actions, PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, can } = await access(event, { project: event.params.key });
	const sp = event.url.searchParams;
	// A filter value the page does not know is dropped (the API answers 400 instead).
	let filters;
	let filterError: string | null = null;
	try {
		filters = parseFilters(new URLSearchParams([...sp.entries()].filter(([k]) => k !== 'q')));
	} catch (e) {
		if (!(e instanceof ServiceError)) throw e;
		filters = {};
		filterError = e.message;
	}
	const [findings, counts, requirements, members] = await Promise.all([
		listFindings(project.id, filters),
		findingCounts(project.id),
		can.workFindings ? requirementOptions(project.id) : [],
		projectMembers(project.id)
	]);
	return {
		project: { key: project.key, name: project.name },
		can,
		findings,
		counts,
		filterError,
		filters: {
			state: sp.get('state') ?? '',
			cause: sp.get('cause') ?? '',
			assignee: sp.get('assignee') ?? '',
			assurance: sp.get('assurance') ?? ''
		},
		states: [
			{ value: OPEN_FINDING_STATES.join(','), label: 'Not yet closed (open, in work, resolved)' },
			...FINDING_STATES.map((s) => ({ value: s, label: FINDING_LOOK[s].label }))
		],
		causes: FINDING_CAUSES.map((c) => ({ value: c, label: CAUSE_LABELS[c] })),
		members: members.map((m) => ({ value: String(m.id), label: m.name })),
		requirements: requirements.map((r) => ({
			value: String(r.id),
			label: `${r.identifier} ${r.title ?? ''}`
		}))
	};
}) satisfies PageServerLoad;

export const actions = {
	raise: async (event) => {
		const { project } = await access(event, { project: event.params.key }, 'workFindings');
		const values = Object.fromEntries(
			[...(await event.request.formData()).entries()].filter(
				(e): e is [string, string] => typeof e[1] === 'string'
			)
		);
		let id: number;
		try {
			id = (await raiseFinding(actorOf(event.locals), project.id, values)).id;
		} catch (e) {
			if (e instanceof ServiceError)
				return fail(e.status, {
					action: 'raise',
					values,
					errors: { ...e.fields, _: e.message } as FieldErrors
				});
			throw e;
		}
		redirect(303, `/p/${project.key}/findings/${id}`);
	}
} satisfies Actions;
