import { Client } from './http';

// Sign-ins through the identity-provider stand-in (fakes/oidc.ts) without a browser: the app's
// client and one for the provider each keep their cookies, and every redirect is followed by hand,
// so the test sees each hop of the authorization-code flow.

export function issuer(): string {
	const v = process.env.OIDC_ISSUER;
	if (!v) throw new Error('OIDC_ISSUER is not set: run the tests through npm test (scripts/test.sh)');
	return v;
}

export interface ProviderRun {
	/** Where the flow ended in the app (path and query). */
	landed: string;
	/** The authorization request the app sent to the provider. */
	authorize: URL;
	/** How many times the provider showed its login form. */
	loginForms: number;
	/** The app's sign-in refusal code (?sso=...), when the app refused. */
	refused: string | null;
}

/**
 * Follow an app answer that leads to the provider, log in there as `email` whenever the provider
 * asks, and follow the redirects back into the app. `idp` keeps the provider's own session.
 */
export async function followThroughProvider(
	app: Client,
	idp: Client,
	first: Response,
	email: string,
	password: string
): Promise<ProviderRun> {
	let res = first;
	let authorize: URL | null = null;
	let loginForms = 0;
	for (let hop = 0; hop < 30; hop++) {
		if (res.status >= 300 && res.status < 400) {
			const to = new URL(res.headers.get('location')!, res.url || app.base);
			await res.arrayBuffer();
			if (to.origin === new URL(issuer()).origin) {
				if (to.pathname === '/auth' && !authorize) authorize = to;
				res = await idp.get(to.pathname + to.search, { accept: 'text/html' });
			} else {
				const path = to.pathname + to.search;
				if (to.pathname.startsWith('/auth/') || to.pathname.startsWith('/signin/fresh/done')) {
					res = await app.get(path, { accept: 'text/html' });
					continue;
				}
				return { landed: path, authorize: authorize!, loginForms, refused: to.searchParams.get('sso') };
			}
			continue;
		}
		const html = await res.text();
		// The app's hand-off page (ProviderHandoff): a refresh to the provider's authorization URL.
		const refresh = html.match(/<meta http-equiv="refresh" content="0;url=([^"]+)"/);
		if (res.status === 200 && refresh) {
			const to = new URL(refresh[1].replaceAll('&amp;', '&'));
			authorize ??= to;
			res = await idp.get(to.pathname + to.search, { accept: 'text/html' });
			continue;
		}
		const form = html.match(/<form method="post" action="(\/interaction\/[^"]+\/login)"/);
		if (res.status === 200 && form) {
			loginForms++;
			res = await idp.postForm(form[1], { email, password });
			continue;
		}
		return {
			landed: `(HTTP ${res.status}) ${html.slice(0, 300)}`,
			authorize: authorize!,
			loginForms,
			refused: null
		};
	}
	throw new Error('too many redirects');
}

/** A client signed in through the identity provider's stand-in (the "Sign in with ..." button). */
export async function signInThroughProvider(
	email: string,
	password: string,
	opts: { app?: Client; idp?: Client; redirectTo?: string } = {}
): Promise<{ app: Client; idp: Client; run: ProviderRun }> {
	const app = opts.app ?? new Client();
	const idp = opts.idp ?? new Client(issuer());
	const first = await app.postForm('/signin/sso', { redirectTo: opts.redirectTo ?? '/' });
	const run = await followThroughProvider(app, idp, first, email, password);
	return { app, idp, run };
}

/** A fresh login (the /signin/fresh form) for a client already signed in through the provider. */
export async function freshProviderLogin(
	app: Client,
	idp: Client,
	email: string,
	password: string,
	redirectTo: string
): Promise<ProviderRun> {
	const first = await app.postForm('/signin/fresh', { redirectTo });
	return followThroughProvider(app, idp, first, email, password);
}
