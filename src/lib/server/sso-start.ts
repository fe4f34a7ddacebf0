import { isRedirect, redirect, type RequestEvent } from '@sveltejs/kit';
import { signIn } from './auth';
import { config } from './config';

/**
 * Start a sign-in at the identity provider: Auth.js sets its state, nonce and PKCE cookies on this
 * response and names the provider's authorization URL, which this returns. `fresh` asks the provider
 * to authenticate the person again whatever session it holds: prompt=login and max_age=0 (OpenID
 * Connect Core 1.0 section 3.1.2.1); the app checks the auth_time that comes back.
 *
 * The page then moves on to the provider itself (ProviderHandoff) rather than the form post being
 * redirected there: the site's Content-Security-Policy has form-action 'self', which browsers also
 * apply to a form post's redirects, and it stays that strict.
 */
export async function startProviderSignIn(
	event: RequestEvent,
	returnTo: string,
	{ fresh }: { fresh: boolean }
): Promise<{ next: string }> {
	const body = new URLSearchParams({ providerId: 'oidc', redirectTo: returnTo });
	if (fresh) {
		body.set('authorizationParams-prompt', 'login');
		body.set('authorizationParams-max_age', '0');
	}
	const headers = new Headers(event.request.headers);
	headers.delete('content-length');
	headers.set('content-type', 'application/x-www-form-urlencoded');
	const request = new Request(event.request.url, { method: 'POST', headers, body });
	let location: string | undefined;
	try {
		await signIn({ ...event, request } as Parameters<typeof signIn>[0]);
	} catch (e) {
		if (!isRedirect(e)) throw e;
		location = e.location;
	}
	if (!location) throw new Error('The sign-in at the identity provider did not start.');
	const to = new URL(location, event.url);
	// Anything but the provider (Auth.js's own error page, say) is one of our pages: go there.
	if (to.origin !== new URL(config.oidc!.issuer).origin) redirect(303, to.pathname + to.search);
	return { next: to.href };
}
