import { json } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { endpoint, readJson } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { freeze, listBaselines } from '$lib/server/baselines/service';
import type { RequestHandler } from './$types';

// Baselines of a project: every member lists them; certifiers (and admins) freeze a new one.
// A freeze refused because of TBD/TBR or pending re-runs answers 409 with `blockers`.
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	return json({ baselines: await listBaselines(project.id) });
}) satisfies RequestHandler;

export const POST = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! }, 'freezeBaselines');
	const body = await readJson(event);
	const baseline = await freeze(actorOf(event.locals), project.id, body);
	return json(baseline, { status: 201 });
}) satisfies RequestHandler;
