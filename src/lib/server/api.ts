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
	if (isDatabaseUnavailable(e)) {
		return apiError(503, 'The database is unavailable right now; nothing was changed. Try again shortly.');
	}
	// Redirects thrown by guards are not expected in the API; anything else is a bug.
	const errorId = event.locals.requestId;
	console.error(`[api] ${event.request.method} ${event.url.pathname} failed (${errorId}):`, e);
	return apiError(500, 'Unexpected error; it has been logged.', { errorId });
}

/** Read a JSON body or fail with 400/415 naming the problem. */
export async function readJson(event: RequestEvent, maxBytes = 2_000_000): Promise<unknown> {
	const type = event.request.headers.get('content-type') ?? '';
	if (!type.toLowerCase().startsWith('application/json')) {
		throw new ServiceError(415, 'Send the body as JSON (Content-Type: application/json).', {
			'content-type': 'Expected application/json.'
		});
	}
	const text = await event.request.text();
	if (text.length > maxBytes) {
		throw new ServiceError(413, `The body is larger than ${maxBytes} bytes.`);
	}
	try {
		return JSON.parse(text);
	} catch (e) {
		throw new ServiceError(400, `The body is not valid JSON: ${(e as Error).message}`, {
			body: 'Not valid JSON.'
		});
	}
}
