import type { RequestEvent } from '@sveltejs/kit';
import { sessionProviderLogin } from '../auth';
import { config } from '../config';
import { freshness, type Freshness } from './sso-rules';

// A fresh login at the identity provider, for acts that need the signer to prove again who they are
// (an electronic signature under single sign-on). The app asks the provider for it with prompt=login
// and max_age=0 (/signin/fresh, OpenID Connect Core 1.0 section 3.1.2.1), and then does not trust
// that the provider obeyed: it checks the auth_time the provider put in the ID token of the sign-in
// this session began with.

/** The path that starts a fresh provider login and then returns to `returnTo` (a same-site path). */
export function freshLoginPath(returnTo: string): string {
	return `/signin/fresh?redirectTo=${encodeURIComponent(returnTo)}`;
}

/** How recent a provider login signing asks for, in seconds (OIDC_FRESH_LOGIN_SECONDS, default 300). */
export function freshLoginMaxAge(): number {
	return config.oidc?.freshLoginSeconds ?? 300;
}

/**
 * The freshness of the request's provider login: fresh when this session (of the signed-in user, not
 * an API token) began with a sign-in at the identity provider whose auth_time is at most
 * `maxAgeSeconds` ago. A password session, or a provider that sent no auth_time, is never fresh.
 */
export async function providerLoginFreshness(
	event: RequestEvent,
	{ maxAgeSeconds }: { maxAgeSeconds: number }
): Promise<Freshness & { authTime: number | null }> {
	const login = config.oidc ? await sessionProviderLogin(event) : null;
	if (!login || !event.locals.user || login.userId !== Number(event.locals.user.id))
		return { fresh: false, reason: 'none', ageSeconds: null, authTime: null };
	return { ...freshness(login.authTime, Date.now() / 1000, maxAgeSeconds), authTime: login.authTime };
}

/** Whether the signer logged in at the identity provider within the last `maxAgeSeconds`. */
export async function hasFreshProviderLogin(
	event: RequestEvent,
	opts: { maxAgeSeconds: number }
): Promise<boolean> {
	return (await providerLoginFreshness(event, opts)).fresh;
}

/** Whether the request's session began at the identity provider (then signing asks for a fresh login, not a password). */
export async function signedInThroughProvider(event: RequestEvent): Promise<boolean> {
	const login = config.oidc ? await sessionProviderLogin(event) : null;
	return !!login && !!event.locals.user && login.userId === Number(event.locals.user.id);
}
