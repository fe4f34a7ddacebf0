import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { UPLOAD_ROLES, requireEvidenceRole } from '$lib/server/evidence/guard';
import { reviseEvidence } from '$lib/server/evidence/service';
import type { RequestHandler } from './$types';

// POST multipart/form-data: a new file that supersedes the current revision (409 once accepted).
// Fields left out keep the previous revision's values.
export const POST = endpoint(async (event) => {
	const id = Number(event.params.id);
	const { project } = await requireEvidenceRole(event, id, UPLOAD_ROLES);
	const record = await reviseEvidence({
		evidenceId: id,
		project,
		actor: actorOf(event.locals),
		headers: event.request.headers,
		body: event.request.body
	});
	return json(record, { status: 201 });
}) satisfies RequestHandler;
