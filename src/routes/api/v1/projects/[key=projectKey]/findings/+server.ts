import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { findingCounts, listFindings, parseFilters } from '$lib/server/findings/service';
import type { RequestHandler } from './$types';

// GET ?state=<state or comma list>&cause=&assignee=&requirement=&assurance= : the project's findings (members).
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	const filters = parseFilters(event.url.searchParams);
	const [findings, counts] = await Promise.all([
		listFindings(project.id, filters),
		findingCounts(project.id)
	]);
	return json({ findings, counts });
}) satisfies RequestHandler;
