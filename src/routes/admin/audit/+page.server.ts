import { fail } from '@sveltejs/kit';
import { access } from '$lib/server/auth';
import { listRecentEvents, verifyAuditTrail } from '$lib/server/audit-service';
import type { Actions, PageServerLoad } from './$types';

export const load = (async (event) => {
	await access(event, 'site');
	return { events: await listRecentEvents(200) };
}) satisfies PageServerLoad;

export const actions = {
	verify: async (event) => {
		await access(event, 'site');
		const r = await verifyAuditTrail();
		if (!r.ok) return fail(409, { action: 'verify', result: r });
		return { action: 'verify', result: r };
	}
} satisfies Actions;
