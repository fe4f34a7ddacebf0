import { isHttpError, json, type RequestEvent, type RequestHandler } from '@sveltejs/kit';
import { z } from 'zod';
import { isDatabaseUnavailable } from './db';
import { ServiceError, fieldErrors } from './errors';

/** JSON error body of every API endpoint. */
export interface ApiError {
	error: { status: number; message: string; fields?: Record<string, string>; [k: string]: unknown };
}

export function apiError(status: number, message: string, extra: Record<string, unknown> = {}) {
	return json({ error: { status, message, ...extra } } satisfies ApiError, { status });
}

/**
 * Wrap an API handler so every failure is JSON with a status that says what happened:
 * 400/401/403/404/409/413/415/422/429 for the caller's mistakes, 503 when a dependency is down,
 * 500 (with an error id, logged) only for our own bugs.
 */
export function endpoint(handler: (event: RequestEvent) => Promise<Response>): RequestHandler {
	return async (event) => {
		try {
			return await handler(event);
		} catch (e) {
			return toApiResponse(e, event);
		}
	};
}

export function toApiResponse(e: unknown, event: RequestEvent): Response {
	if (isHttpError(e))
		return apiError(e.status, e.body.message, e.body.fields ? { fields: e.body.fields } : {});
	if (e instanceof ServiceError) {
		return apiError(e.status, e.message, {
			...(Object.keys(e.fields).length ? { fields: e.fields } : {}),
			...e.details
		});
	}
	if (e instanceof z.ZodError) {
		const fields = fieldErrors(e);
		return apiError(400, 'The request has invalid fields.', { fields });
	}
	const pg = pgRefusal(e);
	if (pg) return apiError(pg.status, pg.message);
	if (isDatabaseUnavailable(e)) {
		return apiError(503, 'The database is unavailable right now; nothing was changed. Try again shortly.');
	}
	// Redirects thrown by guards are not expected in the API; anything else is a bug.
	const errorId = event.locals.requestId;
	console.error(`[api] ${event.request.method} ${event.url.pathname} failed (${errorId}):`, e);
	return apiError(500, 'Unexpected error; it has been logged.', { errorId });
}

/** Read a JSON body or fail with 400/413/415 naming the problem; never holds more than maxBytes. */
export async function readJson(event: RequestEvent, maxBytes = 2_000_000): Promise<unknown> {
	const type = event.request.headers.get('content-type') ?? '';
	if (!type.toLowerCase().startsWith('application/json')) {
		throw new ServiceError(415, 'Send the body as JSON (Content-Type: application/json).', {
			'content-type': 'Expected application/json.'
		});
	}
	const tooLarge = () =>
		new ServiceError(413, `The body is larger than ${maxBytes} bytes; nothing was changed.`);
	if (Number(event.request.headers.get('content-length') ?? 0) > maxBytes) throw tooLarge();
	const reader = event.request.body?.getReader();
	const chunks: Uint8Array[] = [];
	let size = 0;
	if (reader) {
		for (;;) {
			const { done, value } = await reader.read();
			if (done) break;
			size += value.byteLength;
			if (size > maxBytes) {
				await reader.cancel();
				throw tooLarge();
			}
			chunks.push(value);
		}
	}
	const text = new TextDecoder().decode(Buffer.concat(chunks));
	try {
		return JSON.parse(text);
	} catch (e) {
		throw new ServiceError(400, `The body is not valid JSON: ${(e as Error).message}`, {
			body: 'Not valid JSON.'
		});
	}
}

/**
 * Constraint and data errors that reach an endpoint despite validation (a race between two requests,
 * a value PostgreSQL cannot store): a refusal of the request, not a server fault. Nothing was written,
 * since the statement failed inside its transaction.
 */
export function pgRefusal(e: unknown): { status: 400 | 409; message: string } | null {
	const code = (e as { code?: string } | undefined)?.code;
	switch (code) {
		case '23505':
			return {
				status: 409,
				message: 'That already exists (another request may have just created it); nothing was changed.'
			};
		case '23503':
			return {
				status: 409,
				message: 'That refers to something that does not exist (any more); nothing was changed.'
			};
		case '23514':
		case '23502':
			return { status: 400, message: 'A value is outside what is allowed; nothing was changed.' };
		case '22001':
			return { status: 400, message: 'A value is too long; nothing was changed.' };
		case '22003':
			return { status: 400, message: 'A number is out of range; nothing was changed.' };
		case '22P02':
		case '22007':
		case '22008':
		case '22021':
		case '22P05':
			return { status: 400, message: 'A value has the wrong form; nothing was changed.' };
		case '55P03':
		case '40001':
		case '40P01':
			return {
				status: 409,
				message: 'Another change was being made at the same time; nothing was changed. Try again.'
			};
		default:
			return null;
	}
}
