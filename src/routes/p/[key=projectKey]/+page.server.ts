import { access } from '$lib/server/auth';
import { findingCounts } from '$lib/server/findings/service';
import type { PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, role } = await access(event, { project: event.params.key });
	return {
		project: { key: project.key, name: project.name, description: project.description },
		role,
		findings: await findingCounts(project.id)
	};
}) satisfies PageServerLoad;
