import { listProjectsFor } from '$lib/server/identity/service';
import { config } from '$lib/server/config';
import type { LayoutServerLoad } from './$types';

// Display data for the shell only (who is signed in, the project switcher). Access decisions are
// made by access() in each page's own load, which runs on every request.
export const load = (async ({ locals }) => {
	const user = locals.user;
	return {
		user: user ? { id: user.id, email: user.email, name: user.display_name, admin: user.site_admin } : null,
		projects: user
			? (user.site_admin || !locals.memberships ? await listProjectsFor(user) : locals.memberships).map(
					(p) => ({ key: p.key, name: p.name, role: p.role })
				)
			: [],
		demoMode: config.demoMode
	};
}) satisfies LayoutServerLoad;
