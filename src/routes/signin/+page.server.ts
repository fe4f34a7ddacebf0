import { fail, redirect } from '@sveltejs/kit';
import { PRECHECK_HEADER, signIn } from '$lib/server/auth';
import { ServiceError, fieldErrors, type FieldErrors } from '$lib/server/errors';
import { signInForm } from '$lib/server/identity/schema';
import { checkCredentials, precheckNonce } from '$lib/server/identity/service';
import { ssoProvider } from '$lib/server/identity/sso';
import { SSO_REFUSALS } from '$lib/server/identity/sso-rules';
import { safeRedirect } from '$lib/server/safe-redirect';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ locals, url }) => {
	const redirectTo = safeRedirect(url.searchParams.get('redirectTo'));
	if (locals.user) redirect(303, redirectTo);
	const sso = ssoProvider();
	// ?sso=<code>: our refusal of a provider sign-in; ?error=...: Auth.js could not complete one.
	const code = url.searchParams.get('sso');
	const ssoMessage =
		code && code in SSO_REFUSALS
			? SSO_REFUSALS[code as keyof typeof SSO_REFUSALS]
			: url.searchParams.get('error')
				? 'The sign-in did not complete. Try again; if it keeps failing, the identity provider may be unreachable.'
				: null;
	return { redirectTo, sso: sso ? { name: sso.name } : null, ssoMessage };
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
