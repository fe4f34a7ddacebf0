import { Readable } from 'node:stream';
import { error } from '@sveltejs/kit';
import { access, inAddress } from '$lib/server/auth';
import { ServiceError } from '$lib/server/errors';
import { contentDisposition } from '$lib/server/evidence/http';
import { openFile, parseRevision } from '$lib/server/evidence/service';
import type { RequestHandler } from './$types';

// Same-origin inline view of an image or PDF, for the browser's own viewer on the evidence page. Every
// other type is refused here (downloads stay attachments). The CSP lets only our own pages frame it.
const INLINE = new Set(['image/png', 'image/jpeg', 'application/pdf']);

export const GET = (async (event) => {
	const { resource } = await access(event, inAddress(event.params, 'evidence'));
	const id = resource.id;
	try {
		const { file, body } = await openFile(id, parseRevision(event.url.searchParams.get('revision')));
		if (!INLINE.has(file.content_type)) {
			body.destroy();
			error(415, { message: 'Only images and PDF files are shown inline; download the others.' });
		}
		return new Response(Readable.toWeb(body) as ReadableStream, {
			headers: {
				'content-type': file.content_type,
				'content-length': String(file.size_bytes),
				'content-disposition': contentDisposition('inline', file.original_name),
				'cache-control': 'private, no-store',
				'content-security-policy': "frame-ancestors 'self'",
				'x-frame-options': 'SAMEORIGIN'
			}
		});
	} catch (e) {
		if (e instanceof ServiceError) error(e.status, { message: e.message });
		throw e;
	}
}) satisfies RequestHandler;
