import { json } from '@sveltejs/kit';
import { health } from '$lib/server/health';
// Registers the 'storage' check (HeadBucket on the evidence bucket).
import '$lib/server/storage';
// Registers the 'identityProvider' check when single sign-on is configured.
import '$lib/server/identity/sso-health';
import type { RequestHandler } from './$types';

// Public: the state of each dependency. 503 names the failing checks.
export const GET = (async () => {
	const h = await health();
	const failing = Object.entries(h.checks)
		.filter(([, v]) => v !== 'ok')
		.map(([k]) => k);
	return json(failing.length ? { ...h, failing } : h, {
		status: failing.length ? 503 : 200,
		headers: { 'cache-control': 'no-store' }
	});
}) satisfies RequestHandler;
