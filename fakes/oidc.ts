import { createHash, generateKeyPairSync } from 'node:crypto';
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import Provider from 'oidc-provider';
import { FAKE_OIDC_PASSWORD, FAKE_OIDC_USERS } from './oidc-users';

// A local OpenID Connect provider for the demo and the tests, built on oidc-provider (an OpenID
// Certified implementation). It knows the invented people of oidc-users.ts, one client (the app) and
// answers on loopback over plain HTTP. Its login page is this file's own small form; consent is given
// at once (the app is the only client). The ID token carries email, name, groups and always auth_time
// (require_auth_time; OpenID Connect Core 1.0 section 2: the time of the person's authentication), so a
// fresh login asked with prompt=login and max_age=0 can be checked. oidc-provider itself follows
// section 3.1.2.1 for both: prompt=login makes it show the login form even while its session is alive,
// and max_age=0 makes any earlier authentication too old, so auth_time is the time of that new login.
// Redirect URIs: the sign-in (ORIGIN/auth/callback/oidc) and the signing re-authentication
// (ORIGIN/signin/sign/callback).

export const FAKE_OIDC_CLIENT_ID = 'loopwarden';
export const FAKE_OIDC_CLIENT_SECRET = 'loopwarden-demo-client-secret';

const esc = (s: string) =>
	s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

function page(title: string, body: string): string {
	return `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>${esc(title)}</title>
<style>body{font:15px system-ui,sans-serif;margin:3rem auto;max-width:34rem;color:#1d2430}
label{display:block;margin-top:.8rem}input{width:100%;padding:.4rem;font:inherit;box-sizing:border-box}
button{margin-top:1rem;padding:.45rem 1rem;font:inherit}.note{color:#5a6270;font-size:13px}
.err{color:#9b1c1c}table{border-collapse:collapse;font-size:13px;margin-top:.5rem}td{padding:.1rem .5rem .1rem 0}</style>
</head><body>${body}</body></html>`;
}

async function formBody(req: IncomingMessage): Promise<URLSearchParams> {
	const chunks: Buffer[] = [];
	for await (const c of req) chunks.push(c as Buffer);
	return new URLSearchParams(Buffer.concat(chunks).toString('utf8'));
}

function loginPage(uid: string, fresh: boolean, error?: string, email = ''): string {
	const people = FAKE_OIDC_USERS.map(
		(u) => `<tr><td>${esc(u.email)}</td><td>${esc(u.groups.join(', ') || '—')}</td></tr>`
	).join('');
	return page(
		'Identity provider stand-in',
		`<h1>Identity provider stand-in</h1>
<p class="note">Local stand-in for an organisation's identity provider (demo and tests only).</p>
${fresh ? '<p><strong>Loopwarden asks you to sign in again to confirm it is you.</strong></p>' : ''}
${error ? `<p class="err" role="alert">${esc(error)}</p>` : ''}
<form method="post" action="/interaction/${esc(uid)}/login">
<label for="email">E-mail</label><input id="email" name="email" type="email" autocomplete="username" value="${esc(email)}" required>
<label for="password">Password</label><input id="password" name="password" type="password" autocomplete="current-password" required>
<button type="submit">Sign in at the identity provider</button>
</form>
<p class="note">Demo people (password ${esc(FAKE_OIDC_PASSWORD)}) and their groups:</p><table>${people}</table>`
	);
}

export async function startOidcFake(opts: {
	port: number;
	host?: string;
	/** The app's redirect URIs (ORIGIN + /auth/callback/oidc, ORIGIN + /signin/sign/callback). */
	redirectUris: string[];
}): Promise<Server> {
	const host = opts.host ?? '127.0.0.1';
	const issuer = `http://${host}:${opts.port}`;
	const { privateKey } = generateKeyPairSync('rsa', { modulusLength: 2048 });
	// Each start makes a new key; its kid is its RFC 7638 thumbprint, so a restarted stand-in never
	// offers a different key under a kid the app has cached.
	const exported = privateKey.export({ format: 'jwk' });
	const thumbprint = createHash('sha256')
		.update(JSON.stringify({ e: exported.e, kty: exported.kty, n: exported.n }))
		.digest('base64url');
	const jwk = { ...exported, kid: thumbprint, use: 'sig', alg: 'RS256' };
	const byId = new Map(FAKE_OIDC_USERS.map((u) => [u.sub, u]));

	const provider = new Provider(issuer, {
		clients: [
			{
				client_id: FAKE_OIDC_CLIENT_ID,
				client_secret: FAKE_OIDC_CLIENT_SECRET,
				redirect_uris: opts.redirectUris,
				response_types: ['code'],
				grant_types: ['authorization_code'],
				token_endpoint_auth_method: 'client_secret_basic',
				require_auth_time: true
			}
		],
		jwks: { keys: [jwk] },
		cookies: { keys: ['fake-oidc-cookie-key-not-secret'] },
		scopes: ['openid', 'email', 'profile', 'groups'],
		claims: { email: ['email', 'email_verified'], profile: ['name'], groups: ['groups'] },
		// Put the scope claims in the ID token too (the app reads the ID token).
		conformIdTokenClaims: false,
		features: { devInteractions: { enabled: false } },
		interactions: { url: (_ctx: unknown, interaction: { uid: string }) => `/interaction/${interaction.uid}` },
		async findAccount(_ctx: unknown, id: string) {
			const u = byId.get(id);
			if (!u) return undefined;
			return {
				accountId: id,
				claims: async () => ({
					sub: id,
					email: u.email,
					email_verified: true,
					name: u.name,
					groups: u.groups
				})
			};
		},
		renderError(ctx: { type: string; body: string }, out: Record<string, string>) {
			ctx.type = 'html';
			ctx.body = page(
				'Identity provider error',
				`<h1>Error</h1><pre>${esc(JSON.stringify(out, null, 2))}</pre>`
			);
		}
	});
	const oidc = provider.callback();

	async function interaction(req: IncomingMessage, res: ServerResponse, path: string) {
		const details = await provider.interactionDetails(req, res);
		const { uid, prompt, params } = details;
		if (req.method === 'POST' && path.endsWith('/login')) {
			const form = await formBody(req);
			const email = (form.get('email') ?? '').trim().toLowerCase();
			const user = FAKE_OIDC_USERS.find((u) => u.email === email);
			if (!user || form.get('password') !== FAKE_OIDC_PASSWORD) {
				res.writeHead(400, { 'content-type': 'text/html; charset=utf-8' });
				res.end(
					loginPage(uid, params.prompt === 'login', 'That e-mail address and password do not match.', email)
				);
				return;
			}
			await provider.interactionFinished(
				req,
				res,
				{ login: { accountId: user.sub } },
				{
					mergeWithLastSubmission: false
				}
			);
			return;
		}
		if (prompt.name === 'login') {
			res.writeHead(200, { 'content-type': 'text/html; charset=utf-8' });
			res.end(loginPage(uid, params.prompt === 'login' || params.max_age === 0 || params.max_age === '0'));
			return;
		}
		// Consent: the app is this provider's only client, so everything it asks for is granted.
		const accountId = details.session?.accountId;
		if (!accountId) throw new Error('consent without a login');
		const grant = new provider.Grant({ accountId, clientId: String(params.client_id) });
		const missingScope = prompt.details.missingOIDCScope as string[] | undefined;
		const missingClaims = prompt.details.missingOIDCClaims as string[] | undefined;
		if (missingScope) grant.addOIDCScope(missingScope.join(' '));
		if (missingClaims) grant.addOIDCClaims(missingClaims);
		const grantId = await grant.save();
		await provider.interactionFinished(req, res, { consent: { grantId } }, { mergeWithLastSubmission: true });
	}

	const server = createServer((req, res) => {
		const path = (req.url ?? '/').split('?')[0];
		if (path.startsWith('/interaction/')) {
			interaction(req, res, path).catch((e: Error) => {
				res.writeHead(400, { 'content-type': 'text/html; charset=utf-8' });
				res.end(page('Identity provider error', `<h1>Error</h1><p>${esc(e.message)}</p>`));
			});
			return;
		}
		oidc(req, res);
	});
	await new Promise<void>((resolve, reject) => {
		server.once('error', reject);
		server.listen(opts.port, host, () => resolve());
	});
	return server;
}
