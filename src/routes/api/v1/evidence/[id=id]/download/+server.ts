import { Readable } from 'node:stream';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { contentDisposition } from '$lib/server/evidence/http';
import { openFile, parseRevision } from '$lib/server/evidence/service';
import type { RequestHandler } from './$types';

// GET (?revision=n, default the current one): the file, streamed from the evidence store, always as an
// attachment. Project members only.
export const GET = endpoint(async (event) => {
	const id = Number(event.params.id);
	await access(event, { evidence: id });
	const { file, body } = await openFile(id, parseRevision(event.url.searchParams.get('revision')));
	return new Response(Readable.toWeb(body) as ReadableStream, {
		headers: {
			'content-type': file.content_type,
			'content-length': String(file.size_bytes),
			'content-disposition': contentDisposition('attachment', file.original_name),
			'cache-control': 'private, no-store',
			'x-evidence-sha256': file.sha256,
			'x-evidence-revision': String(file.revision)
		}
	});
}) satisfies RequestHandler;
