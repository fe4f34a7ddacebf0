import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { reviseEvidence } from '$lib/server/evidence/service';
import type { RequestHandler } from './$types';

// POST multipart/form-data: a new file that supersedes the current revision (409 once accepted).
// Fields left out keep the previous revision's values.
export const POST = endpoint(async (event) => {
	const id = Number(event.params.id);
	const { project } = await access(event, { evidence: id }, 'uploadEvidence');
	const record = await reviseEvidence({
		evidenceId: id,
		project,
		actor: actorOf(event.locals),
		headers: event.request.headers,
		body: event.request.body
	});
	return json(record, { status: 201 });
}) satisfies RequestHandler;
