// A last line of defence for every form post and JSON body, before any route code runs: PostgreSQL
// text cannot hold the NUL character (it would fail deep inside a query as a 500), and keys such as
// "__proto__" have no business in our inputs (they break serialisation of form echoes). Both are
// refused here with a 400 that names the field. Multipart bodies (file uploads) are left to their
// own route, which checks its text fields itself.

const RESERVED = new Set(['__proto__', 'constructor', 'prototype']);
const MAX_INSPECT = 2_000_000;

export interface InputProblem {
	field: string;
	message: string;
}

function checkValue(path: string, v: unknown, depth = 0): InputProblem | null {
	if (depth > 64)
		return { field: path || 'body', message: 'The JSON is nested too deeply (more than 64 levels).' };
	if (typeof v === 'string') {
		return v.includes('\u0000')
			? { field: path || 'body', message: 'Text may not contain the NUL character (U+0000).' }
			: null;
	}
	if (Array.isArray(v)) {
		for (let i = 0; i < v.length; i++) {
			const p = checkValue(`${path}${path ? '.' : ''}${i}`, v[i], depth + 1);
			if (p) return p;
		}
		return null;
	}
	if (v && typeof v === 'object') {
		for (const k of Object.keys(v)) {
			const field = `${path}${path ? '.' : ''}${k}`;
			if (RESERVED.has(k) || k.includes('\u0000'))
				return { field, message: `"${k}" is not an accepted field name.` };
			const p = checkValue(field, (v as Record<string, unknown>)[k], depth + 1);
			if (p) return p;
		}
	}
	return null;
}

/**
 * Bodies other than file uploads are small: anything larger is refused before it is read (the server's
 * own limit is lifted for the streamed evidence uploads, which enforce theirs while streaming).
 */
export const MAX_NON_UPLOAD_BODY = 4_000_000;

/** True when a non-multipart body announces more than MAX_NON_UPLOAD_BODY bytes. */
export function oversized(request: Request): boolean {
	if (!['POST', 'PUT', 'PATCH', 'DELETE'].includes(request.method)) return false;
	const type = (request.headers.get('content-type') ?? '').toLowerCase();
	if (type.startsWith('multipart/form-data')) return false;
	return Number(request.headers.get('content-length') ?? 0) > MAX_NON_UPLOAD_BODY;
}

/** Inspect a request body without consuming it. Returns the first problem, or null. */
export async function inspectBody(request: Request): Promise<InputProblem | null> {
	if (!['POST', 'PUT', 'PATCH', 'DELETE'].includes(request.method)) return null;
	const type = (request.headers.get('content-type') ?? '').toLowerCase();
	const length = Number(request.headers.get('content-length') ?? 0);
	if (length > MAX_INSPECT) return null;
	if (type.startsWith('application/x-www-form-urlencoded')) {
		const text = await request.clone().text();
		if (text.length > MAX_INSPECT) return null;
		const params = new URLSearchParams(text);
		for (const [k, v] of params) {
			if (RESERVED.has(k) || k.includes('\u0000'))
				return { field: k.split('\u0000').join('\\0'), message: `"${k}" is not an accepted field name.` };
			if (v.includes('\u0000'))
				return { field: k, message: 'Text may not contain the NUL character (U+0000).' };
		}
		return null;
	}
	if (type.startsWith('application/json')) {
		const text = await request.clone().text();
		if (text.length > MAX_INSPECT) return null;
		let parsed: unknown;
		try {
			parsed = JSON.parse(text);
		} catch {
			return null; // the route answers malformed JSON itself
		}
		return checkValue('', parsed);
	}
	return null;
}

/** The refusal, in the shape the caller expects: JSON for the API and enhanced forms, a page otherwise. */
export function refusal(problem: InputProblem, kind: 'api' | 'action' | 'page'): Response {
	const message = `${problem.field}: ${problem.message}`;
	if (kind === 'api') {
		return new Response(
			JSON.stringify({ error: { status: 400, message, fields: { [problem.field]: problem.message } } }),
			{
				status: 400,
				headers: { 'content-type': 'application/json' }
			}
		);
	}
	if (kind === 'action') {
		// The form-action result format of use:enhance; `data` is devalue-encoded: a flat table where
		// index 0 is the root object and other entries are the values it refers to.
		const data = JSON.stringify([
			{ errors: 1, message: 3 },
			{ [problem.field]: 2, _: 3 },
			problem.message,
			message
		]);
		return new Response(JSON.stringify({ type: 'failure', status: 400, data }), {
			status: 400,
			headers: { 'content-type': 'application/json' }
		});
	}
	const esc = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
	return new Response(
		`<!doctype html><meta charset="utf-8"><title>Not accepted</title><p>${esc(message)}</p><p><a href="javascript:history.back()">Back</a></p>`,
		{ status: 400, headers: { 'content-type': 'text/html; charset=utf-8' } }
	);
}
