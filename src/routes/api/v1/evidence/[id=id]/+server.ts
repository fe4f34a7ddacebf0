import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { getEvidence } from '$lib/server/evidence/service';
import type { RequestHandler } from './$types';

// The evidence item: every revision with its file metadata, SHA-256, links and review.
export const GET = endpoint(async (event) => {
	const id = Number(event.params.id);
	await access(event, { evidence: id });
	return json(await getEvidence(id), { headers: { 'cache-control': 'no-store' } });
}) satisfies RequestHandler;
