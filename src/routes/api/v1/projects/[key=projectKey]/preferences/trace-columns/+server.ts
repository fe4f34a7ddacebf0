import { json } from '@sveltejs/kit';
import { endpoint, readJson } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { parseOrThrow } from '$lib/server/errors';
import { traceColumns } from '$lib/server/preferences/schema';
import { chooseTraceColumns, traceColumnsOf } from '$lib/server/preferences/service';
import type { RequestHandler } from './$types';

// The caller's own choice of trace-matrix columns in this project: { columns: [...] }. Every member
// may read and set their own; nobody else's.
export const GET = endpoint(async (event) => {
	const { user, project } = await access(event, { project: event.params.key! });
	return json({ columns: await traceColumnsOf(Number(user.id), project.id) });
}) satisfies RequestHandler;

export const PUT = endpoint(async (event) => {
	const { user, project } = await access(event, { project: event.params.key! });
	const input = parseOrThrow(traceColumns, await readJson(event, 10_000));
	return json({ columns: await chooseTraceColumns(Number(user.id), project.id, input) });
}) satisfies RequestHandler;
