import { access } from '$lib/server/auth';
import { LEVELS, STATUSES, listFilters } from '$lib/server/requirements/schema';
import { countRequirements, listRequirements, projectMembers } from '$lib/server/requirements/service';
import { projectStamp } from '$lib/server/live/service';
import type { PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, can } = await access(event, { project: event.params.key });
	const sp = event.url.searchParams;
	const filters = listFilters.parse({
		status: sp.get('status') || undefined,
		level: sp.get('level') || undefined,
		owner: sp.get('owner') || undefined,
		q: sp.get('q') || undefined
	});
	// The stamp is read before the rows: the page re-reads when the live stamp differs from it.
	event.depends('lw:requirement-list');
	const live = await projectStamp(project.id);
	const [rows, total, members] = await Promise.all([
		listRequirements(project.id, filters),
		countRequirements(project.id),
		projectMembers(project.id)
	]);
	return {
		project: { key: project.key, name: project.name },
		can,
		filters: {
			status: filters.status ?? '',
			level: filters.level ?? '',
			owner: filters.owner ? String(filters.owner) : '',
			q: filters.q ?? ''
		},
		live: live.stamp,
		rows,
		total,
		members: members.map((m) => ({ id: m.id, name: m.name })),
		statuses: [...STATUSES],
		levels: [...LEVELS]
	};
}) satisfies PageServerLoad;
