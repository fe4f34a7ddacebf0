import type { RequestEvent } from '@sveltejs/kit';
import { readJson } from '../api';
import { ServiceError } from '../errors';

// A package request has no options: the body is empty or the JSON object {}; any field is refused by
// name (an unknown field is never silently ignored).
export async function readPackageRequest(event: RequestEvent): Promise<void> {
	const length = event.request.headers.get('content-length');
	if (!event.request.body || length === '0') return;
	const body = await readJson(event, 10_000);
	if (body === null || typeof body !== 'object' || Array.isArray(body))
		throw new ServiceError(400, 'The body must be a JSON object ({}); a package request takes no options.', {
			_: 'Expected {}.'
		});
	const keys = Object.keys(body);
	if (keys.length)
		throw new ServiceError(
			400,
			`${keys[0]}: unknown field "${keys[0]}"; a package request takes no options.`,
			Object.fromEntries(keys.map((k) => [k, `unknown field "${k}"`]))
		);
}

/** The page form's counterpart: the "Generate" button posts no field, so any field is refused by name. */
export async function packageFormProblems(request: Request): Promise<Record<string, string> | null> {
	let keys: string[];
	try {
		keys = [...new Set((await request.formData()).keys())];
	} catch {
		return { _: 'The form could not be read; a package request takes no fields.' };
	}
	if (!keys.length) return null;
	return {
		_: `${keys[0]}: unknown field "${keys[0]}"; a package request takes no fields.`,
		...Object.fromEntries(keys.map((k) => [k, `unknown field "${k}"`]))
	};
}
