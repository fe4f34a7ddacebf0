import { error } from '@sveltejs/kit';
import { access } from '$lib/server/auth';
import { freshLoginMaxAge, providerLoginFreshness } from '$lib/server/identity/fresh-login';
import { ssoProvider } from '$lib/server/identity/sso';
import { safeRedirect } from '$lib/server/safe-redirect';
import { startProviderSignIn } from '$lib/server/sso-start';
import type { Actions, PageServerLoad } from './$types';

// A fresh login at the identity provider (prompt=login, max_age=0) before an act that needs the
// signer to prove again who they are; /signin/fresh/done checks the auth_time that came back.
function provider() {
	const p = ssoProvider();
	if (!p) error(404, { message: 'Single sign-on is not configured on this site.' });
	return p;
}

export const load = (async (event) => {
	await access(event, 'account');
	const p = provider();
	const maxAge = freshLoginMaxAge();
	const now = await providerLoginFreshness(event, { maxAgeSeconds: maxAge });
	return {
		provider: { name: p.name },
		redirectTo: safeRedirect(event.url.searchParams.get('redirectTo')),
		maxAgeSeconds: maxAge,
		fresh: now.fresh
	};
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		await access(event, 'account');
		provider();
		const form = await event.request.formData();
		const to = safeRedirect(form.get('redirectTo'));
		return startProviderSignIn(event, `/signin/fresh/done?redirectTo=${encodeURIComponent(to)}`, {
			fresh: true
		});
	}
} satisfies Actions;
