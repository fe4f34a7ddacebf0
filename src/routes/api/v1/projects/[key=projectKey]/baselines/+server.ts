import { json } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { endpoint, readJson } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { freeze, listBaselines } from '$lib/server/baselines/service';
import { signerOf } from '$lib/server/identity/reauth';
import { freezeForm } from '$lib/server/baselines/schema';
import { parseOrThrow } from '$lib/server/errors';
import type { RequestHandler } from './$types';

// Baselines of a project: every member lists them; certifiers (and admins) freeze a new one.
// A freeze refused because of TBD/TBR or pending re-runs answers 409 with `blockers`.
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	return json({ baselines: await listBaselines(project.id) });
}) satisfies RequestHandler;

// The freeze is the baseline's release, signed: the body carries the password too (re-entered at signing).
export const POST = endpoint(async (event) => {
	const { project, role, user } = await access(event, { project: event.params.key! }, 'freezeBaselines');
	const { password, ...body } = ((await readJson(event)) ?? {}) as Record<string, unknown>;
	// The fields first, then the signer: a bad name is told as such, whatever the password.
	parseOrThrow(freezeForm, body);
	const signer = await signerOf(event, user, { password });
	const baseline = await freeze(actorOf(event.locals), project.id, body, { role, signer });
	return json(baseline, { status: 201 });
}) satisfies RequestHandler;
