import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import type { RequestHandler } from './$types';

// The project and the caller's role in it (members, or a token scoped to it).
export const GET = endpoint(async (event) => {
	const { project, role } = await access(event, { project: event.params.key! });
	return json({ key: project.key, name: project.name, description: project.description, role });
}) satisfies RequestHandler;
