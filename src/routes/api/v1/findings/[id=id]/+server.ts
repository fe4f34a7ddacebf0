import { json } from '@sveltejs/kit';
import { endpoint, readJson } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { changeFinding, getFinding, isSignedChange, parseChange } from '$lib/server/findings/service';
import { signerOf } from '$lib/server/identity/reauth';
import type { RequestHandler } from './$types';

export const GET = endpoint(async (event) => {
	const id = Number(event.params.id);
	await access(event, { finding: id });
	return json(await getFinding(id));
}) satisfies RequestHandler;

// PATCH { version, state?, assigneeId?, justification?, targetDate?, comment?, password? }: 409 when
// `version` is not the current one. Closing, deferring and "not a defect" are a certifier's signed acts
// (password re-entered); the other moves and reassignment need the workFindings capability.
export const PATCH = endpoint(async (event) => {
	const id = Number(event.params.id);
	await access(event, { finding: id }, 'workFindings');
	const change = parseChange(await readJson(event));
	const signed = isSignedChange(change);
	const { role, user } = await access(event, { finding: id }, signed ? 'decideFindings' : 'workFindings');
	const signer = signed ? await signerOf(event, user, { password: change.password }) : null;
	const r = await changeFinding(actorOf(event.locals), role, id, change, signer);
	return json(r);
}) satisfies RequestHandler;
