import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { getRun } from '$lib/server/analyses/service';
import type { RequestHandler } from './$types';

// One analysis run: inputs (revision, specification, model version and hash, engine version), verdict,
// numbers, worst operating point, curves, timing and trigger.
export const GET = endpoint(async (event) => {
	const id = Number(event.params.id);
	await access(event, { run: id });
	return json(await getRun(id), { headers: { 'cache-control': 'no-store' } });
}) satisfies RequestHandler;
