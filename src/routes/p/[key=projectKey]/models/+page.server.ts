import { access } from '$lib/server/auth';
import { listModels } from '$lib/server/models/service';
import type { PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, can } = await access(event, { project: event.params.key });
	const rows = await listModels(project.id);
	return {
		project: { key: project.key, name: project.name },
		can,
		models: rows.map((m) => ({
			id: Number(m.id),
			name: m.name,
			description: m.description,
			owner: m.owner_name ?? '—',
			latestVersion: m.latest_version,
			latestAt: m.latest_at ? new Date(m.latest_at).toISOString() : '',
			latestHash: m.latest_hash ?? '',
			requirementCount: Number(m.requirement_count)
		}))
	};
}) satisfies PageServerLoad;
