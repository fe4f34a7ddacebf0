import { fail, redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import {
	currentManifest,
	freeze,
	listBaselines,
	unchangedSentence,
	type Blocker
} from '$lib/server/baselines/service';
import { freezeForm } from '$lib/server/baselines/schema';
import { signerOf } from '$lib/server/identity/reauth';
import { MEANINGS } from '$lib/server/signatures/meanings';
import { ServiceError, fieldErrors, type FieldErrors } from '$lib/server/errors';
import { latestPackages, requestPackage } from '$lib/server/packages/service';
import { packageFormProblems } from '$lib/server/packages/schema';
import type { Actions, PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, can } = await access(event, { project: event.params.key });
	const baselines = (await listBaselines(project.id)).map((b) => ({
		id: Number(b.id),
		number: b.number,
		label: b.label,
		note: b.note,
		hash: b.manifest_hash,
		requirements: b.requirement_count,
		engineVersion: b.engine_version,
		by: b.created_by_label,
		at: new Date(b.created_at).toISOString()
	}));
	// What would block a freeze now, for those who may freeze.
	let current: {
		hash: string;
		requirements: number;
		blockers: Blocker[];
		unchanged: string | null;
	} | null = null;
	if (can.freezeBaselines) {
		const c = await currentManifest(project.id);
		// The list is newest first: the latest baseline that froze this very state.
		const same = baselines.find((b) => b.hash === c.hash);
		current = {
			hash: c.hash,
			requirements: c.manifest.requirements.length,
			blockers: c.blockers,
			unchanged: same ? unchangedSentence(same) : null
		};
	}
	return {
		project: { key: project.key, name: project.name },
		can,
		baselines,
		current,
		drafts: await latestPackages(project, null),
		meaning: MEANINGS['baseline.release']
	};
}) satisfies PageServerLoad;

export const actions = {
	freeze: async (event) => {
		const { project, role, user } = await access(event, { project: event.params.key }, 'freezeBaselines');
		const form = Object.fromEntries(await event.request.formData());
		const values = {
			label: String(form.label ?? ''),
			note: String(form.note ?? ''),
			confirmUnchanged: form.confirmUnchanged === 'true'
		};
		const parsed = freezeForm.safeParse(values);
		if (!parsed.success)
			return fail(400, {
				action: 'freeze',
				values,
				errors: fieldErrors(parsed.error),
				blockers: [] as Blocker[],
				unchangedSince: null
			});
		let id: number;
		try {
			const signer = await signerOf(event, user, form);
			id = Number((await freeze(actorOf(event.locals), project.id, parsed.data, { role, signer })).id);
		} catch (e) {
			if (e instanceof ServiceError) {
				return fail(e.status, {
					action: 'freeze',
					values,
					errors: { ...e.fields, _: e.message } as FieldErrors,
					blockers: (e.details.blockers as Blocker[] | undefined) ?? [],
					unchangedSince: (e.details.unchangedSince as { number: number } | undefined) ?? null
				});
			}
			throw e;
		}
		redirect(303, `/p/${project.key}/baselines/${id}`);
	},
	// Queue a draft data package of the present state (marked DRAFT on every page).
	package: async (event) => {
		const { project } = await access(event, { project: event.params.key }, 'generatePackages');
		const problems = await packageFormProblems(event.request);
		if (problems) return fail(400, { action: 'package', errors: problems });
		await requestPackage(actorOf(event.locals), project, null);
		redirect(303, `/p/${project.key}/baselines`);
	}
} satisfies Actions;
