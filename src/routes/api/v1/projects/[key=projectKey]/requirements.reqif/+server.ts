import { actorOf } from '$lib/server/audit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { reqifResponse } from '$lib/server/interchange/http';
import { exportProject } from '$lib/server/interchange/service';
import type { RequestHandler } from './$types';

// The project's current requirements as ReqIF 1.2 (members).
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	return reqifResponse(await exportProject(project), actorOf(event.locals), project.id);
}) satisfies RequestHandler;
