import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { requirementAnalyses } from '$lib/server/analyses/service';
import type { RequestHandler } from './$types';

// A requirement's analysis state and run history (newest first); the newest finished run with its curves.
export const GET = endpoint(async (event) => {
	const id = Number(event.params.id);
	const { project } = await access(event, { requirement: id });
	return json(await requirementAnalyses(id, project.key), { headers: { 'cache-control': 'no-store' } });
}) satisfies RequestHandler;
