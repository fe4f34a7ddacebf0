import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { checkIntegrity, parseRevision } from '$lib/server/evidence/service';
import type { RequestHandler } from './$types';

// POST (?revision=n): re-read the stored file and recompute its SHA-256. 200 either way; `match` says.
export const POST = endpoint(async (event) => {
	const id = Number(event.params.id);
	const { project } = await access(event, { evidence: id });
	const revision = parseRevision(event.url.searchParams.get('revision'));
	return json(await checkIntegrity({ evidenceId: id, revision, project, actor: actorOf(event.locals) }));
}) satisfies RequestHandler;
