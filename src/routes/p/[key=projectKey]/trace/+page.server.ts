import { access } from '$lib/server/auth';
import { owners } from '$lib/server/trace/service';
import type { PageServerLoad } from './$types';

// The rows themselves are fetched by the browser from the trace-matrix API (and refreshed while
// re-runs are pending); the page load only gives the filter choices.
export const load = (async (event) => {
	const { project, role } = await access(event, { project: event.params.key });
	return {
		project: { key: project.key, name: project.name },
		role,
		owners: await owners(project.id)
	};
}) satisfies PageServerLoad;
