import { json } from '@sveltejs/kit';
import { endpoint, readJson } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { parseOrThrow } from '$lib/server/errors';
import { createRequirement as createSchema, listFiltersStrict } from '$lib/server/requirements/schema';
import { createRequirement, getRequirement, listRequirements } from '$lib/server/requirements/service';
import type { RequestHandler } from './$types';

// The requirements of a project, each with its analysis state. Filters: ?status=&level=&owner=<user id>&q=
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	const query = Object.fromEntries([...event.url.searchParams].filter(([, v]) => v !== ''));
	const filters = parseOrThrow(listFiltersStrict, query);
	const requirements = await listRequirements(project.id, filters);
	return json({ project: project.key, count: requirements.length, requirements });
}) satisfies RequestHandler;

// Create one: { title, statement, rationale?, level, assuranceLevel, methods[], ownerId?, status?, changeNote? }
export const POST = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! }, 'writeRequirements');
	const input = parseOrThrow(createSchema, await readJson(event));
	const created = await createRequirement(actorOf(event.locals), { id: project.id, key: project.key }, input);
	return json(
		{ requirement: await getRequirement(created.id) },
		{ status: 201, headers: { location: `/api/v1/requirements/${created.id}` } }
	);
}) satisfies RequestHandler;
