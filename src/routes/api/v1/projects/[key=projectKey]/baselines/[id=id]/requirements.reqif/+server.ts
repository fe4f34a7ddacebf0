import { actorOf } from '$lib/server/audit';
import { endpoint } from '$lib/server/api';
import { access, inAddress } from '$lib/server/auth';
import { getBaseline } from '$lib/server/baselines/service';
import { reqifResponse } from '$lib/server/interchange/http';
import { exportBaseline } from '$lib/server/interchange/service';
import type { RequestHandler } from './$types';

// A frozen baseline as ReqIF 1.2, exactly as frozen (members).
export const GET = endpoint(async (event) => {
	const { project, resource } = await access(event, inAddress(event.params, 'baseline'));
	const b = await getBaseline(project.id, resource.id);
	const out = await exportBaseline(project, b);
	return reqifResponse(out, actorOf(event.locals), project.id, b.id);
}) satisfies RequestHandler;
