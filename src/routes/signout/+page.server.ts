import { redirect } from '@sveltejs/kit';
import { signOut } from '$lib/server/auth';
import type { Actions, PageServerLoad } from './$types';

export const load = (() => redirect(303, '/')) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const headers = new Headers(event.request.headers);
		headers.delete('content-length');
		headers.set('content-type', 'application/x-www-form-urlencoded');
		const request = new Request(event.request.url, {
			method: 'POST',
			headers,
			body: new URLSearchParams({ redirectTo: '/' })
		});
		await signOut({ ...event, request });
	}
} satisfies Actions;
