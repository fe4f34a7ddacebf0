import { randomUUID } from 'node:crypto';
import type { Handle, HandleServerError } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { authHandle, identityFromSession } from '$lib/server/auth';
import { closeDb, isDatabaseUnavailable } from '$lib/server/db';
import { stopBoss } from '$lib/server/jobs/boss';
import { startMailLoop } from '$lib/server/mail';
// Registers the job queue's health check.
import '$lib/server/analyses/health';
import { MAX_NON_UPLOAD_BODY, inspectBody, oversized, refusal } from '$lib/server/input-guard';
import { userFromApiToken } from '$lib/server/tokens-auth';

startMailLoop();

// adapter-node emits this after SIGINT/SIGTERM once the server stopped accepting requests: release
// the database pool and the queue's connections so that the process exits.
process.once('sveltekit:shutdown', () => {
	Promise.allSettled([stopBoss(), closeDb()]).finally(() => process.exit(0));
});

const identify: Handle = async ({ event, resolve }) => {
	event.locals.requestId = randomUUID();
	event.locals.user = null;
	event.locals.memberships = null;
	event.locals.databaseUnavailable = false;
	event.locals.apiToken = null;
	try {
		const bearer = event.request.headers.get('authorization');
		if (bearer?.toLowerCase().startsWith('bearer ') && event.url.pathname.startsWith('/api/')) {
			const found = await userFromApiToken(bearer.slice(7).trim(), {
				method: event.request.method,
				path: event.url.pathname,
				requestId: event.locals.requestId
			});
			if (found) {
				event.locals.user = found.user;
				event.locals.apiToken = found.token;
			}
		} else {
			const found = await identityFromSession(event);
			if (found) {
				event.locals.user = found.user;
				event.locals.memberships = found.memberships;
			}
		}
	} catch (e) {
		if (!isDatabaseUnavailable(e)) throw e;
		// The health endpoint still answers (anonymously) and names the failing check.
		if (event.url.pathname !== '/api/v1/health') return unavailable(event.url.pathname);
	}
	if (oversized(event.request)) {
		const message = `The request body is larger than ${MAX_NON_UPLOAD_BODY} bytes; nothing was changed.`;
		return withHeaders(
			new Response(JSON.stringify({ error: { status: 413, message } }), {
				status: 413,
				headers: { 'content-type': 'application/json' }
			}),
			event.locals.requestId
		);
	}
	const problem = await inspectBody(event.request);
	if (problem) {
		const kind = event.url.pathname.startsWith('/api/')
			? 'api'
			: event.request.headers.get('x-sveltekit-action') === 'true'
				? 'action'
				: 'page';
		return withHeaders(refusal(problem, kind), event.locals.requestId);
	}
	const response = await resolve(event);
	// A load or action that failed because PostgreSQL is down (handleError flagged it) is a 503 with a
	// retry hint, not a 500; the body (the error page or the action's error result) stays as rendered.
	if (event.locals.databaseUnavailable && response.status === 500) {
		const headers = new Headers(response.headers);
		headers.set('retry-after', '5');
		return withHeaders(new Response(response.body, { status: 503, headers }), event.locals.requestId);
	}
	return withHeaders(response, event.locals.requestId);
};

function withHeaders(response: Response, requestId: string): Response {
	response.headers.set('X-Content-Type-Options', 'nosniff');
	response.headers.set('Referrer-Policy', 'same-origin');
	response.headers.set('X-Request-Id', requestId);
	return response;
}

function unavailable(path: string): Response {
	const message = 'The database is unavailable right now; nothing was changed. Try again shortly.';
	if (path.startsWith('/api/')) {
		return new Response(JSON.stringify({ error: { status: 503, message } }), {
			status: 503,
			headers: { 'content-type': 'application/json', 'retry-after': '5' }
		});
	}
	return new Response(`<!doctype html><title>Unavailable</title><p>${message}</p>`, {
		status: 503,
		headers: { 'content-type': 'text/html; charset=utf-8', 'retry-after': '5' }
	});
}

export const handle = sequence(authHandle, identify);

export const handleError: HandleServerError = ({ error, event, status, message }) => {
	const errorId = event.locals.requestId ?? randomUUID();
	if (isDatabaseUnavailable(error)) {
		event.locals.databaseUnavailable = true;
		return { message: 'The database is unavailable right now. Try again shortly.', errorId };
	}
	if (status !== 404)
		console.error(`[app] ${event.request.method} ${event.url.pathname} (${errorId}):`, error);
	return { message: status === 404 ? message : 'Unexpected error; it has been logged.', errorId };
};
