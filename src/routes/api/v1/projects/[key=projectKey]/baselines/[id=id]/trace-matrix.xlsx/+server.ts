import { actorOf } from '$lib/server/audit';
import { endpoint } from '$lib/server/api';
import { access, inAddress } from '$lib/server/auth';
import { getBaseline } from '$lib/server/baselines/service';
import { workbookStream } from '$lib/server/trace/export';
import { recordExport } from '$lib/server/trace/service';
import type { RequestHandler } from './$types';

// A baseline as the same workbook as the live matrix, written from its frozen manifest.
export const GET = endpoint(async (event) => {
	const { project, resource } = await access(event, inAddress(event.params, 'baseline'));
	const b = await getBaseline(project.id, resource.id);
	await recordExport(actorOf(event.locals), project.id, {
		format: 'xlsx',
		rows: b.manifest.requirements.length,
		baselineId: b.id
	});
	const body = workbookStream(b.manifest, {
		exportedAt: new Date(),
		exportedBy: event.locals.user!.email,
		baseline: {
			number: b.number,
			label: b.label,
			manifestHash: b.manifest_hash,
			frozenAt: new Date(b.created_at).toISOString(),
			frozenBy: b.created_by_label
		}
	});
	return new Response(body, {
		headers: {
			'content-type': 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
			'content-disposition': `attachment; filename="${project.key}-baseline-${b.number}.xlsx"`,
			'cache-control': 'no-store'
		}
	});
}) satisfies RequestHandler;
