import { fail, redirect } from '@sveltejs/kit';
import { PRECHECK_HEADER, signIn } from '$lib/server/auth';
import { ServiceError, fieldErrors, type FieldErrors } from '$lib/server/errors';
import { signInForm } from '$lib/server/identity/schema';
import { checkCredentials, precheckNonce } from '$lib/server/identity/service';
import type { Actions, PageServerLoad } from './$types';

/** Only same-site paths; anything else goes home. */
function safeRedirect(v: unknown): string {
	return typeof v === 'string' && v.startsWith('/') && !v.startsWith('//') && !v.startsWith('/\\') ? v : '/';
}

export const load = (async ({ locals, url }) => {
	const redirectTo = safeRedirect(url.searchParams.get('redirectTo'));
	if (locals.user) redirect(303, redirectTo);
	return { redirectTo };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const form = Object.fromEntries(await event.request.formData());
		const redirectTo = safeRedirect(form.redirectTo);
		const values = { email: typeof form.email === 'string' ? form.email : '' };
		const parsed = signInForm.safeParse(form);
		if (!parsed.success) return fail(400, { values, errors: fieldErrors(parsed.error), message: null });
		// Check first, so that the rate limit answers 429 and a refusal keeps the user on this form.
		let userId: number;
		try {
			userId = (await checkCredentials(parsed.data.email, parsed.data.password, event.getClientAddress())).id;
		} catch (e) {
			if (e instanceof ServiceError)
				return fail(e.status, { values, errors: {} as FieldErrors, message: e.message });
			throw e;
		}
		// Auth.js then issues the session cookie (it checks the credentials again in authorize()).
		const body = new URLSearchParams({
			providerId: 'credentials',
			email: parsed.data.email,
			password: parsed.data.password,
			redirectTo
		});
		const headers = new Headers(event.request.headers);
		headers.delete('content-length');
		headers.set('content-type', 'application/x-www-form-urlencoded');
		headers.set(PRECHECK_HEADER, precheckNonce(userId));
		const request = new Request(event.request.url, { method: 'POST', headers, body });
		await signIn({ ...event, request });
		return fail(500, { values, errors: {} as FieldErrors, message: 'Sign-in did not complete.' });
	}
} satisfies Actions;
