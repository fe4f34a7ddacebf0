import { json } from '@sveltejs/kit';
import { endpoint, readJson } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { createModel, listModels } from '$lib/server/models/service';
import type { RequestHandler } from './$types';

// The loop models of a project (every member reads) and creating one (analysts).
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	const rows = await listModels(project.id);
	return json({
		models: rows.map((m) => ({
			id: Number(m.id),
			name: m.name,
			description: m.description,
			owner: m.owner_email ? { name: m.owner_name, email: m.owner_email } : null,
			latestVersion: m.latest_version,
			latestHash: m.latest_hash,
			latestAt: m.latest_at ? new Date(m.latest_at).toISOString() : null,
			requirementCount: m.requirement_count
		}))
	});
}) satisfies RequestHandler;

export const POST = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! }, 'writeModels');
	const body = await readJson(event);
	const m = await createModel(actorOf(event.locals), project.id, body);
	return json(
		{
			id: Number(m.id),
			name: m.name,
			description: m.description,
			ownerId: m.owner_id,
			latestVersion: m.latest_version
		},
		{ status: 201, headers: { location: `/api/v1/projects/${project.key}/models/${m.id}/versions` } }
	);
}) satisfies RequestHandler;
