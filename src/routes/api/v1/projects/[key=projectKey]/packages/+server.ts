import { json } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { latestPackages, requestPackage } from '$lib/server/packages/service';
import { readPackageRequest } from '$lib/server/packages/schema';
import type { RequestHandler } from './$types';

// Drafts: POST queues a data package of the project's present state (marked DRAFT on every page; not a
// baseline), 202 with its address; GET lists the newest drafts. Certifiers generate, members read.
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	return json({ packages: await latestPackages(project, null) });
}) satisfies RequestHandler;

export const POST = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! }, 'generatePackages');
	await readPackageRequest(event);
	const p = await requestPackage(actorOf(event.locals), project, null);
	return json(p, { status: 202, headers: { location: p.href } });
}) satisfies RequestHandler;
