import type { RequestEvent } from '@sveltejs/kit';
import { Readable } from 'node:stream';
import { actorOf } from '../audit';
import { access } from '../auth';
import { contentDisposition } from '../evidence/http';
import { recordExport } from '../trace/service';
import { openPackageFile } from './service';

const TYPES = { report: 'application/pdf', archive: 'application/zip' } as const;

/**
 * A finished package's report or archive as a download, streamed from object storage with its SHA-256.
 * Every member may download; the download is recorded as an export (of the baseline, or the project for
 * a draft).
 */
export async function packageDownload(event: RequestEvent, which: 'report' | 'archive'): Promise<Response> {
	const { project } = await access(event, { project: event.params.key! });
	const f = await openPackageFile(project, Number(event.params.pkg), which);
	await recordExport(actorOf(event.locals), project.id, {
		format: which === 'report' ? 'pdf' : 'zip',
		rows: 0,
		baselineId: f.row.baseline_id === null ? null : Number(f.row.baseline_id)
	});
	return new Response(Readable.toWeb(f.body) as ReadableStream, {
		headers: {
			'content-type': TYPES[which],
			'content-length': String(f.bytes),
			'content-disposition': contentDisposition('attachment', f.name),
			'cache-control': 'private, no-store',
			'x-sha256': f.sha256
		}
	});
}
