import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { parseOrThrow } from '$lib/server/errors';
import { jsonLinesStream } from '$lib/server/trace/export';
import { matrixQuery, paramsOf } from '$lib/server/trace/schema';
import { matrixAll, matrixPage } from '$lib/server/trace/service';
import type { RequestHandler } from './$types';

// The trace matrix as JSON: a page of rows and the total (filters, sorting and paging as query
// parameters), or with ?all=1 every matching row as JSON lines: a first line { total, pending }, then
// one row per line, so a client can draw the first rows before the last arrive.
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	const q = parseOrThrow(matrixQuery, paramsOf(event.url));
	if (q.all === '1') {
		const rows = await matrixAll(project.id, q);
		const pending = rows.filter((r) => r.analysisState === 'pending').length;
		return new Response(jsonLinesStream(rows, { total: rows.length, pending }), {
			headers: { 'content-type': 'application/x-ndjson; charset=utf-8', 'cache-control': 'no-store' }
		});
	}
	return json(await matrixPage(project.id, q), { headers: { 'cache-control': 'no-store' } });
}) satisfies RequestHandler;
