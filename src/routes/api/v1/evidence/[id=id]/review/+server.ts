import { json } from '@sveltejs/kit';
import { endpoint, readJson } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { reviewEvidence } from '$lib/server/evidence/service';
import type { RequestHandler } from './$types';

// POST { decision: 'accepted' | 'rejected', comment, revision }: a certifier's decision on the current revision.
export const POST = endpoint(async (event) => {
	const id = Number(event.params.id);
	const { project, role } = await access(event, { evidence: id }, 'reviewEvidence');
	const body = (await readJson(event)) as Record<string, unknown>;
	const r = await reviewEvidence({
		evidenceId: id,
		project,
		actor: actorOf(event.locals),
		role,
		fields: body ?? {}
	});
	return json(r, { status: 201 });
}) satisfies RequestHandler;
