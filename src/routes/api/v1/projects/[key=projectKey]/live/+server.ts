import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { projectStamp } from '$lib/server/live/service';
import type { RequestHandler } from './$types';

// The project's change stamp, asked every few seconds by open pages (src/lib/live.ts).
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	return json(await projectStamp(project.id), { headers: { 'cache-control': 'no-store' } });
}) satisfies RequestHandler;
