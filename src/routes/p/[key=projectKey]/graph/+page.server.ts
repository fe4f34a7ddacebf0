import { access } from '$lib/server/auth';
import { traceGraph } from '$lib/server/analyses/service';
import type { PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project } = await access(event, { project: event.params.key });
	return {
		project: { key: project.key, name: project.name },
		graph: await traceGraph(project.id, project.key)
	};
}) satisfies PageServerLoad;
