import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { access, inAddress } from '$lib/server/auth';
import { getBaseline } from '$lib/server/baselines/service';
import type { RequestHandler } from './$types';

// One baseline with its manifest; `verified` says whether the manifest still hashes to its SHA-256.
export const GET = endpoint(async (event) => {
	const { project, resource } = await access(event, inAddress(event.params, 'baseline'));
	return json(await getBaseline(project.id, resource.id));
}) satisfies RequestHandler;
