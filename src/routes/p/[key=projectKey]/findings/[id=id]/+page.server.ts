import { error, fail } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access, inAddress } from '$lib/server/auth';
import { ServiceError, type FieldErrors } from '$lib/server/errors';
import { changeFinding, getFinding, parseChange, signedActOfMove } from '$lib/server/findings/service';
import { signerOf } from '$lib/server/identity/reauth';
import { signsWithProvider, startProviderSigning } from '$lib/server/identity/provider-signing';
import { ssoProvider } from '$lib/server/identity/sso';
import { projectMembers } from '$lib/server/requirements/service';
import { MEANINGS } from '$lib/server/signatures/meanings';
import { FINDING_LOOK, WORK_MOVES, canSignMove, SIGNED_MOVES } from '$lib/verification';
import type { Actions, PageServerLoad } from './$types';

function failed(action: string, e: unknown, values: Record<string, string>) {
	if (e instanceof ServiceError)
		return fail(e.status, { action, values, errors: { ...e.fields, _: e.message } as FieldErrors });
	throw e;
}

async function formValues(request: Request) {
	const { password, ...values } = Object.fromEntries(
		[...(await request.formData()).entries()].filter((e): e is [string, string] => typeof e[1] === 'string')
	);
	return { values, password: password ?? '' };
}

export const load = (async (event) => {
	const { project, can, resource } = await access(event, inAddress(event.params, 'finding'));
	let found;
	try {
		found = await getFinding(resource.id);
	} catch (e) {
		if (e instanceof ServiceError) error(e.status, { message: e.message });
		throw e;
	}
	const f = found.finding;
	const members = can.workFindings ? await projectMembers(project.id) : [];
	return {
		project: { key: project.key, name: project.name },
		can,
		...found,
		workMoves: WORK_MOVES[f.state].map((s) => ({ value: s, label: FINDING_LOOK[s].label })),
		signedMoves: SIGNED_MOVES.filter((m) => canSignMove(f.state, m)).map((m) => ({
			value: m,
			label: FINDING_LOOK[m].label,
			meaning: MEANINGS[signedActOfMove(m)!]
		})),
		members: members.map((m) => ({ value: String(m.id), label: m.name })),
		// An account without a password confirms its signature by a fresh login at the identity provider.
		signVia: (await signsWithProvider(Number(event.locals.user!.id))) ? (ssoProvider()?.name ?? null) : null
	};
}) satisfies PageServerLoad;

export const actions = {
	work: async (event) => {
		const { resource, role } = await access(event, inAddress(event.params, 'finding'), 'workFindings');
		const { values } = await formValues(event.request);
		try {
			const change = parseChange({
				version: values.version,
				...(values.state ? { state: values.state } : {}),
				...(values.assigneeId ? { assigneeId: values.assigneeId } : {})
			});
			if (change.state && (SIGNED_MOVES as readonly string[]).includes(change.state))
				throw new ServiceError(
					400,
					'Closing, deferring and "not a defect" are signed: use the signing form.'
				);
			await changeFinding(actorOf(event.locals), role, resource.id, change, null);
		} catch (e) {
			return failed('work', e, values);
		}
		return { action: 'work', ok: true };
	},
	decide: async (event) => {
		const { resource, role, user, project } = await access(
			event,
			inAddress(event.params, 'finding'),
			'decideFindings'
		);
		const { values, password } = await formValues(event.request);
		try {
			const raw = {
				version: values.version,
				state: values.state,
				...(values.justification ? { justification: values.justification } : {}),
				...(values.targetDate ? { targetDate: values.targetDate } : {}),
				...(values.comment ? { comment: values.comment } : {})
			};
			const change = parseChange(raw);
			const act = signedActOfMove(change.state);
			if (act && (await signsWithProvider(Number(user.id)))) {
				const { next } = await startProviderSigning(user, event.url.origin, {
					projectId: project.id,
					act,
					meaning: MEANINGS[act],
					target: { type: 'finding', id: resource.id, revision: change.version },
					fields: raw,
					returnTo: event.url.pathname
				});
				return { action: 'decide', next };
			}
			const signer = await signerOf(event, user, { password });
			await changeFinding(actorOf(event.locals), role, resource.id, change, signer);
		} catch (e) {
			return failed('decide', e, values);
		}
		return { action: 'decide', ok: true };
	}
} satisfies Actions;
