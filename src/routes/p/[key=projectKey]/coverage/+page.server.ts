import { access } from '$lib/server/auth';
import { coverage } from '$lib/server/coverage/service';
import type { PageServerLoad } from './$types';

// Every role may look; viewers are who it is for. Loading it also records today's point of the trend.
export const load = (async (event) => {
	const { project } = await access(event, { project: event.params.key });
	return { project: { key: project.key, name: project.name }, coverage: await coverage(project.id) };
}) satisfies PageServerLoad;
