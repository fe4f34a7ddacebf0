import { access } from '$lib/server/auth';
import { traceColumnsOf } from '$lib/server/preferences/service';
import { matrixQuery } from '$lib/server/trace/schema';
import { matrixPage, owners } from '$lib/server/trace/service';
import type { PageServerLoad } from './$types';

/** Rows in the first screenful: rendered by the server, so they show before any script runs. */
const FIRST_SCREEN = 100;
const FILTERS = ['state', 'level', 'assurance', 'method', 'owner', 'q', 'count'] as const;

// The first page of rows comes with the page (filtered as the address says), so the matrix shows at
// once and also without JavaScript; the browser then reads the whole set from the trace-matrix API
// (and again while re-runs are pending). The load also gives the filter choices and the caller's
// chosen columns.
export const load = (async (event) => {
	const { user, project, role } = await access(event, { project: event.params.key });
	const filters = Object.fromEntries(
		FILTERS.flatMap((k) => {
			const v = event.url.searchParams.get(k);
			return v ? [[k, v]] : [];
		})
	);
	// A filter the API would refuse (a hand-edited address) shows the first rows unfiltered; the page's
	// own filters then apply in the browser.
	const parsed = matrixQuery.safeParse({ ...filters, limit: FIRST_SCREEN });
	const q = parsed.success ? parsed.data : matrixQuery.parse({ limit: FIRST_SCREEN });
	const [first, ownerList, columns] = await Promise.all([
		matrixPage(project.id, q),
		owners(project.id),
		traceColumnsOf(user.id, project.id)
	]);
	return {
		project: { key: project.key, name: project.name },
		role,
		owners: ownerList,
		columns,
		first: {
			rows: first.rows,
			total: first.total,
			filtered: parsed.success && Object.keys(filters).length > 0
		}
	};
}) satisfies PageServerLoad;
