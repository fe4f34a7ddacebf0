import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { getPackage } from '$lib/server/packages/service';
import type { RequestHandler } from './$types';

// A data package's state (queued, running with its progress, done with the download links, error).
// Every member of the project (certifiers, viewers ...) may read it and download the files.
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	return json(await getPackage(project, Number(event.params.pkg)), {
		headers: { 'cache-control': 'no-store' }
	});
}) satisfies RequestHandler;
