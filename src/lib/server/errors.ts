import { z } from 'zod';

/**
 * An expected failure of a service call: the route turns it into `fail(status, ...)` for a form
 * or a JSON error for the API. `fields` maps a field name to a message in the user's words.
 */
export class ServiceError extends Error {
	constructor(
		public status: 400 | 401 | 403 | 404 | 409 | 413 | 415 | 422 | 429 | 503,
		message: string,
		public fields: Record<string, string> = {},
		public details: Record<string, unknown> = {}
	) {
		super(message);
		this.name = 'ServiceError';
	}
}

/** Field errors from a zod error, keyed by the dotted path ("operatingPoints.0.model.den"). */
export function fieldErrors(error: z.ZodError): Record<string, string> {
	const out: Record<string, string> = {};
	for (const issue of error.issues) {
		const key = issue.path.length ? issue.path.map(String).join('.') : '_';
		out[key] ??= issue.message;
	}
	return out;
}

/** Parse with zod or throw a 400 ServiceError naming each field. */
export function parseOrThrow<T extends z.ZodType>(schema: T, input: unknown): z.infer<T> {
	const r = schema.safeParse(input);
	if (!r.success) {
		const fields = fieldErrors(r.error);
		const first = Object.entries(fields)[0];
		throw new ServiceError(400, first ? `${first[0]}: ${first[1]}` : 'Invalid input', fields);
	}
	return r.data;
}

/** Field name -> message, as forms show them ("_" for the form as a whole). */
export type FieldErrors = Record<string, string>;
