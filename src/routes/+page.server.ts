import { listProjectsFor } from '$lib/server/identity/service';
import type { PageServerLoad } from './$types';

// Public: the landing page for visitors, the project list for members.
export const load = (async ({ locals }) => {
	if (!locals.user) return { projects: null };
	const projects = await listProjectsFor(locals.user);
	return {
		projects: projects.map((p) => ({ key: p.key, name: p.name, description: p.description, role: p.role }))
	};
}) satisfies PageServerLoad;
