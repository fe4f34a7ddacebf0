import type { Actor } from '../audit';
import { recordReqifExport, type ReqifExport } from './service';

/**
 * A ReqIF export as a streamed attachment: one chunk per requirement. The export is recorded in the
 * audit trail once the last chunk went out.
 */
export function reqifResponse(
	out: ReqifExport,
	actor: Actor,
	projectId: number,
	baselineId?: number
): Response {
	const it = out.chunks[Symbol.iterator]();
	const enc = new TextEncoder();
	const body = new ReadableStream<Uint8Array>({
		async pull(controller) {
			// A few chunks per pull keep the stream busy without holding the whole file.
			for (let i = 0; i < 64; i++) {
				const next = it.next();
				if (next.done) {
					controller.close();
					await recordReqifExport(actor, projectId, out.count, baselineId).catch((e) =>
						console.error('[export] audit of a ReqIF export failed:', e)
					);
					return;
				}
				controller.enqueue(enc.encode(next.value));
			}
		}
	});
	return new Response(body, {
		headers: {
			'content-type': 'application/xml; charset=utf-8',
			'content-disposition': `attachment; filename="${out.fileName}"`,
			'cache-control': 'no-store'
		}
	});
}
