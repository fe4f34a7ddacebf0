import { error, redirect } from '@sveltejs/kit';
import { ssoProvider } from '$lib/server/identity/sso';
import { safeRedirect } from '$lib/server/safe-redirect';
import { startProviderSignIn } from '$lib/server/sso-start';
import type { Actions, PageServerLoad } from './$types';

// Sign-in through the organisation's identity provider (only when one is configured).
function provider() {
	const p = ssoProvider();
	if (!p) error(404, { message: 'Single sign-on is not configured on this site.' });
	return p;
}

export const load = (async ({ locals, url }) => {
	const p = provider();
	const redirectTo = safeRedirect(url.searchParams.get('redirectTo'));
	if (locals.user) redirect(303, redirectTo);
	return { provider: { name: p.name }, redirectTo };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		provider();
		const form = await event.request.formData();
		return startProviderSignIn(event, safeRedirect(form.get('redirectTo')), { fresh: false });
	}
} satisfies Actions;
