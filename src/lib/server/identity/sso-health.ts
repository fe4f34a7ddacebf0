import { config } from '../config';
import { registerHealthCheck } from '../health';

// The 'identityProvider' health check, registered only when single sign-on is configured: the
// provider's discovery document (OpenID Connect Discovery 1.0 section 4) is reachable and names the
// configured issuer, so sign-ins through it can start.
export async function checkIdentityProvider(): Promise<'ok' | string> {
	const c = config.oidc;
	if (!c) return 'not configured';
	const url = `${c.issuer}/.well-known/openid-configuration`;
	try {
		const res = await fetch(url, {
			signal: AbortSignal.timeout(2_500),
			headers: { accept: 'application/json' }
		});
		if (!res.ok) return `unreachable: ${url} answered ${res.status}`;
		const doc = (await res.json()) as { issuer?: unknown; authorization_endpoint?: unknown };
		if (typeof doc.issuer !== 'string' || doc.issuer.replace(/\/+$/, '') !== c.issuer)
			return `wrong issuer: the discovery document names ${String(doc.issuer)}, not ${c.issuer}`;
		if (typeof doc.authorization_endpoint !== 'string')
			return 'the discovery document has no authorization_endpoint';
		return 'ok';
	} catch (e) {
		return `unreachable: ${url}: ${(e as Error).message}`;
	}
}

if (config.oidc) registerHealthCheck('identityProvider', checkIdentityProvider);
