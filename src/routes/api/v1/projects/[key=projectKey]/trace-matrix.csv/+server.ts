import { actorOf } from '$lib/server/audit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { parseOrThrow } from '$lib/server/errors';
import { csvStream } from '$lib/server/trace/export';
import { filtersText, matrixQuery, paramsOf } from '$lib/server/trace/schema';
import { matrixAll, recordExport } from '$lib/server/trace/service';
import type { RequestHandler } from './$types';

// The matrix sheet as CSV, with the same columns as the workbook's.
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	const q = parseOrThrow(matrixQuery, paramsOf(event.url));
	const rows = await matrixAll(project.id, q);
	await recordExport(actorOf(event.locals), project.id, {
		format: 'csv',
		rows: rows.length,
		filters: { text: filtersText(q) }
	});
	const stamp = new Date().toISOString().slice(0, 10);
	return new Response(csvStream(rows), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${project.key}-trace-matrix-${stamp}.csv"`,
			'cache-control': 'no-store'
		}
	});
}) satisfies RequestHandler;
