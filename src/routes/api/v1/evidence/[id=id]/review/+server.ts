import { json } from '@sveltejs/kit';
import { endpoint, readJson } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { reviewEvidence } from '$lib/server/evidence/service';
import { signerOf } from '$lib/server/identity/reauth';
import { reviewForm } from '$lib/server/evidence/schema';
import { parseOrThrow } from '$lib/server/errors';
import type { RequestHandler } from './$types';

// POST { decision: 'accepted' | 'rejected', comment, revision, password }: a certifier's signed decision on
// the current revision (the password is re-entered at signing; a wrong one changes nothing).
export const POST = endpoint(async (event) => {
	const id = Number(event.params.id);
	const { project, role, user } = await access(event, { evidence: id }, 'reviewEvidence');
	const body = ((await readJson(event)) as Record<string, unknown>) ?? {};
	// The fields first, then the signer: a missing comment is told as such, whatever the password.
	parseOrThrow(reviewForm, body);
	const signer = await signerOf(event, user, body);
	const r = await reviewEvidence({
		evidenceId: id,
		project,
		actor: actorOf(event.locals),
		role,
		fields: body,
		signer
	});
	return json(r, { status: 201 });
}) satisfies RequestHandler;
