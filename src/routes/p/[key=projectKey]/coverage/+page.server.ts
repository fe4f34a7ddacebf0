import { access } from '$lib/server/auth';
import { coverage } from '$lib/server/coverage/service';
import { findingCounts } from '$lib/server/findings/service';
import type { PageServerLoad } from './$types';

// Every role may look; viewers are who it is for. Loading it also records today's point of the trend.
export const load = (async (event) => {
	const { project } = await access(event, { project: event.params.key });
	const [c, findings] = await Promise.all([coverage(project.id), findingCounts(project.id)]);
	return { project: { key: project.key, name: project.name }, coverage: c, findings };
}) satisfies PageServerLoad;
