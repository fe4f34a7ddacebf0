import { json } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { endpoint } from '$lib/server/api';
import { access, inAddress } from '$lib/server/auth';
import { requestPackage } from '$lib/server/packages/service';
import { readPackageRequest } from '$lib/server/packages/schema';
import type { RequestHandler } from './$types';

// Queue the data package (report and archive) of a frozen baseline: 202 with the package's address
// (Location), where GET gives its state and, once done, the download links. Certifiers (and admins).
export const POST = endpoint(async (event) => {
	const { project, resource } = await access(event, inAddress(event.params, 'baseline'), 'generatePackages');
	await readPackageRequest(event);
	const p = await requestPackage(actorOf(event.locals), project, resource.id);
	return json(p, { status: 202, headers: { location: p.href } });
}) satisfies RequestHandler;
