import { actorOf } from '$lib/server/audit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { parseOrThrow } from '$lib/server/errors';
import { workbookStream } from '$lib/server/trace/export';
import { filtersText, matrixQuery, paramsOf } from '$lib/server/trace/schema';
import { openSnapshot, recordExport } from '$lib/server/trace/service';
import type { RequestHandler } from './$types';

// The trace matrix workbook (cover, matrix, requirements, analyses, evidence, open items), streamed
// from database cursors: the export is recorded once the snapshot is open and counted, before a byte
// is written.
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	const q = parseOrThrow(matrixQuery, paramsOf(event.url));
	const snap = await openSnapshot(project.id, q);
	const filters = filtersText(q);
	try {
		await recordExport(actorOf(event.locals), project.id, {
			format: 'xlsx',
			rows: snap.total,
			filters: { text: filters }
		});
	} catch (e) {
		await snap.close();
		throw e;
	}
	const stamp = new Date().toISOString().slice(0, 10);
	const body = workbookStream(
		snap,
		{
			exportedAt: new Date(),
			exportedBy: event.locals.user!.email,
			baseline: null,
			filters
		},
		snap.close
	);
	return new Response(body, {
		headers: {
			'content-type': 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
			'content-disposition': `attachment; filename="${project.key}-trace-matrix-${stamp}.xlsx"`,
			'cache-control': 'no-store'
		}
	});
}) satisfies RequestHandler;
