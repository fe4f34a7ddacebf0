import { error, redirect } from '@sveltejs/kit';
import { access } from '$lib/server/auth';
import { freshLoginMaxAge, freshLoginPath, providerLoginFreshness } from '$lib/server/identity/fresh-login';
import { ssoProvider } from '$lib/server/identity/sso';
import { safeRedirect } from '$lib/server/safe-redirect';
import type { PageServerLoad } from './$types';

// Back from a fresh login at the identity provider: on to the page that asked for it when the
// provider's auth_time is recent enough, else this page says why not (and offers to try again).
export const load = (async (event) => {
	await access(event, 'account');
	const p = ssoProvider();
	if (!p) error(404, { message: 'Single sign-on is not configured on this site.' });
	const to = safeRedirect(event.url.searchParams.get('redirectTo'));
	const maxAge = freshLoginMaxAge();
	const f = await providerLoginFreshness(event, { maxAgeSeconds: maxAge });
	if (f.fresh) redirect(303, to);
	return {
		provider: { name: p.name },
		reason: f.reason,
		ageSeconds: f.ageSeconds,
		authTime: f.authTime === null ? null : new Date(f.authTime * 1000).toISOString(),
		maxAgeSeconds: maxAge,
		retry: freshLoginPath(to),
		redirectTo: to
	};
}) satisfies PageServerLoad;
