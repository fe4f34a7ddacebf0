import { createHash, createPublicKey, randomBytes, verify, type JsonWebKey } from 'node:crypto';
import { recordEvent, type Actor } from '../audit';
import { config } from '../config';
import { db } from '../db';
import { ServiceError } from '../errors';
import { confirmedByProviderLogin, type Signer } from './reauth';
import { users } from './repo';
import { signingChallenges, type SigningChallengeRow } from './signing-repo';
import { ssoIdentities } from './sso-repo';
import { AUTH_TIME_SKEW_SECONDS } from './sso-rules';
import {
	bindingNonce,
	SIGNING_CHALLENGE_MINUTES,
	PROVIDER_REAUTH_METHOD,
	SIGNING_REFUSALS,
	signingLoginVerdict,
	type SigningRefusal
} from './signing-rules';

// Signing by an account that signs in only through the identity provider (it has no Loopwarden
// password to re-enter). The app runs its own authorization-code request for the one pending signature
// (not Auth.js's sign-in, whose state and nonce cannot name a signature, and which would replace the
// session with whoever logged in): prompt=login and max_age=0 (OpenID Connect Core 1.0 section
// 3.1.2.1), PKCE (RFC 7636, S256), a state whose SHA-256 finds the pending signature and a nonce that
// commits to it (signing-rules.ts bindingNonce). The answer comes back to /signin/sign/callback, which
// the provider must list as a redirect URI (ORIGIN/signin/sign/callback). The ID token is validated
// as OpenID Connect Core 1.0 section 3.1.3.7 says (signature with the provider's published key, iss,
// aud, azp, exp, nonce), then the subject and the auth_time (section 2) against signing-rules.ts.

/** The redirect URI of signing answers, below the app's origin. */
export const SIGNING_CALLBACK_PATH = '/signin/sign/callback';

const b64url = (b: Buffer) => b.toString('base64url');
const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex');

interface Discovery {
	issuer: string;
	authorization_endpoint: string;
	token_endpoint: string;
	jwks_uri: string;
}
let discovered: { at: number; doc: Discovery } | null = null;
let keys: { at: number; keys: (JsonWebKey & { kid?: string })[] } | null = null;
const CACHE_MS = 10 * 60_000;

async function discovery(): Promise<Discovery> {
	const c = config.oidc!;
	if (discovered && Date.now() - discovered.at < CACHE_MS) return discovered.doc;
	const res = await fetch(`${c.issuer}/.well-known/openid-configuration`);
	if (!res.ok) throw new ServiceError(503, `The identity provider did not answer (HTTP ${res.status}).`);
	const doc = (await res.json()) as Discovery;
	discovered = { at: Date.now(), doc };
	return doc;
}

async function signingKeys(refresh: boolean) {
	if (!refresh && keys && Date.now() - keys.at < CACHE_MS) return keys.keys;
	const res = await fetch((await discovery()).jwks_uri);
	if (!res.ok) throw new ServiceError(503, `The identity provider's keys did not load (HTTP ${res.status}).`);
	keys = { at: Date.now(), keys: ((await res.json()) as { keys: JsonWebKey[] }).keys };
	return keys.keys;
}

/**
 * Whether this account confirms its signatures at the identity provider: single sign-on is configured,
 * the account has no Loopwarden password and is linked to a person of that provider. Accounts with a
 * password keep re-entering it.
 */
export async function signsWithProvider(userId: number): Promise<boolean> {
	const c = config.oidc;
	if (!c) return false;
	const row = await users.byId(db(), userId);
	if (!row || row.password_hash) return false;
	return (await ssoIdentities.ofUser(db(), userId)).some((i) => i.issuer === c.issuer);
}

/** What the signature will be, once the provider confirms the signer. */
export interface PendingSignature {
	projectId: number;
	act: string;
	meaning: string;
	target: { type: string; id: number; revision: number };
	/** The rest of the signing form (decision, comment ...), used when the answer comes back. */
	fields: Record<string, unknown>;
	/** The page to go back to (a same-site path). */
	returnTo: string;
}

/**
 * Keep the pending signature and return the provider's authorization URL for it. The page moves on
 * there (ProviderHandoff); nothing is signed until the answer comes back and is verified.
 */
export async function startProviderSigning(
	user: { id: number },
	origin: string,
	p: PendingSignature
): Promise<{ next: string }> {
	const c = config.oidc;
	if (!c) throw new ServiceError(404, 'Single sign-on is not configured on this site.');
	const d = await discovery();
	const state = b64url(randomBytes(32));
	const salt = b64url(randomBytes(16));
	const verifier = b64url(randomBytes(32));
	const nonce = bindingNonce(salt, {
		userId: user.id,
		act: p.act,
		meaning: p.meaning,
		targetType: p.target.type,
		targetId: p.target.id,
		revision: p.target.revision
	});
	await signingChallenges.insert(db(), {
		state_sha256: sha256(state),
		// The salt is kept; the nonce is recomputed from it and the binding when the answer comes back.
		nonce: salt,
		code_verifier: verifier,
		user_id: user.id,
		project_id: p.projectId,
		act: p.act,
		meaning: p.meaning,
		target_type: p.target.type,
		target_id: p.target.id,
		target_revision: p.target.revision,
		fields: p.fields,
		return_to: p.returnTo,
		expires_at: new Date(Date.now() + SIGNING_CHALLENGE_MINUTES * 60_000)
	});
	const url = new URL(d.authorization_endpoint);
	url.search = new URLSearchParams({
		response_type: 'code',
		client_id: c.clientId,
		redirect_uri: origin + SIGNING_CALLBACK_PATH,
		scope: 'openid',
		state,
		nonce,
		// OpenID Connect Core 1.0 section 3.1.2.1: prompt=login makes the provider ask for the
		// credentials again; max_age=0 asks for an authentication no older than 0 s and makes auth_time
		// a required claim of the ID token.
		prompt: 'login',
		max_age: '0',
		code_challenge: b64url(createHash('sha256').update(verifier).digest()),
		code_challenge_method: 'S256'
	}).toString();
	return { next: url.href };
}

/** A refusal: recorded (audit `signature.refused`, the challenge's outcome), then thrown with its words. */
async function refuse(
	actor: Actor,
	challenge: SigningChallengeRow | null,
	reason: SigningRefusal,
	detail: Record<string, unknown> = {},
	known: SigningChallengeRow | null = challenge
): Promise<never> {
	await db().transaction(async (trx) => {
		if (challenge) await signingChallenges.settle(trx, Number(challenge.id), `refused: ${reason}`);
		await recordEvent(trx, actor, {
			projectId: challenge ? Number(challenge.project_id) : null,
			action: 'signature.refused',
			subjectType: challenge?.target_type ?? 'user',
			subjectId: challenge ? Number(challenge.target_id) : (actor.userId ?? null),
			after: { reason: `identity provider: ${reason}`, ...detail }
		});
	});
	// The page to go back to, for the signer's own pending signature only.
	const returnTo = known && Number(known.user_id) === actor.userId ? known.return_to : '/';
	throw new ServiceError(
		reason === 'other-user' ? 403 : 400,
		SIGNING_REFUSALS[reason],
		{},
		{ reason, returnTo }
	);
}

function decodePart(part: string | undefined): Record<string, unknown> {
	return JSON.parse(Buffer.from(part ?? '', 'base64url').toString('utf8'));
}

/** The ID token's claims once its signature, issuer, audience and expiry are checked (Core 3.1.3.7). */
async function verifiedClaims(idToken: string, d: Discovery): Promise<Record<string, unknown> | null> {
	const c = config.oidc!;
	const parts = idToken.split('.');
	if (parts.length !== 3) return null;
	let header: Record<string, unknown>;
	let claims: Record<string, unknown>;
	try {
		header = decodePart(parts[0]);
		claims = decodePart(parts[1]);
	} catch {
		return null;
	}
	// The client was registered for RS256 ID tokens (the default of OpenID Connect Core 1.0 3.1.3.7 item 7).
	if (header.alg !== 'RS256') return null;
	// The cached keys first; when none of them verifies the token, the provider may have rotated its
	// keys (a new key can even reuse a kid), so its key set is fetched once more and tried again.
	const verifiesWith = (list: (JsonWebKey & { kid?: string })[]) =>
		list
			.filter((k) => k.kty === 'RSA' && (header.kid === undefined || k.kid === header.kid))
			.some((jwk) =>
				verify(
					'RSA-SHA256',
					Buffer.from(`${parts[0]}.${parts[1]}`),
					createPublicKey({ key: jwk, format: 'jwk' }),
					Buffer.from(parts[2], 'base64url')
				)
			);
	const ok = verifiesWith(await signingKeys(false)) || verifiesWith(await signingKeys(true));
	if (!ok) return null;
	const now = Date.now() / 1000;
	const aud = Array.isArray(claims.aud) ? claims.aud : [claims.aud];
	if (claims.iss !== d.issuer) return null;
	if (!aud.includes(c.clientId)) return null;
	if (aud.length > 1 && claims.azp !== c.clientId) return null;
	if (typeof claims.exp !== 'number' || claims.exp < now - AUTH_TIME_SKEW_SECONDS) return null;
	if (typeof claims.iat !== 'number') return null;
	return claims;
}

/**
 * The provider's answer to a signing request: find the pending signature by the state (once: a second
 * use is a replay), exchange the code, verify the ID token, its nonce (this signature), its subject
 * (this signer) and its auth_time (signing-rules.ts). Returns the pending signature and the confirmed
 * signer for it; the caller performs the act at once (the confirmation lasts one request).
 */
export async function completeProviderSigning(
	user: { id: number; email: string; display_name: string },
	actor: Actor,
	origin: string,
	query: { state: string | null; code: string | null; error: string | null }
): Promise<{ pending: SigningChallengeRow; signer: Signer }> {
	const c = config.oidc;
	if (!c) throw new ServiceError(404, 'Single sign-on is not configured on this site.');
	const found = query.state ? await signingChallenges.byState(db(), sha256(query.state)) : undefined;
	if (!found) return refuse(actor, null, 'unknown-state');
	if (Number(found.user_id) !== user.id)
		return refuse(actor, null, 'other-user', { challenge: Number(found.id) });
	const challenge = await signingChallenges.claim(db(), Number(found.id));
	if (!challenge) return refuse(actor, null, 'replayed', { challenge: Number(found.id) }, found);
	if (new Date(challenge.expires_at).getTime() < Date.now()) return refuse(actor, challenge, 'expired');
	if (query.error || !query.code)
		return refuse(actor, challenge, 'provider-error', { error: String(query.error ?? 'no code') });

	const d = await discovery();
	const res = await fetch(d.token_endpoint, {
		method: 'POST',
		headers: {
			'content-type': 'application/x-www-form-urlencoded',
			// RFC 6749 section 2.3.1: client_secret_basic, each part form-encoded.
			authorization: `Basic ${Buffer.from(`${encodeURIComponent(c.clientId)}:${encodeURIComponent(c.clientSecret)}`).toString('base64')}`
		},
		body: new URLSearchParams({
			grant_type: 'authorization_code',
			code: query.code,
			redirect_uri: origin + SIGNING_CALLBACK_PATH,
			code_verifier: challenge.code_verifier
		})
	});
	const tokens = (await res.json().catch(() => ({}))) as { id_token?: unknown; error?: unknown };
	if (!res.ok || typeof tokens.id_token !== 'string')
		return refuse(actor, challenge, 'provider-error', { error: String(tokens.error ?? res.status) });
	const claims = await verifiedClaims(tokens.id_token, d);
	if (!claims) return refuse(actor, challenge, 'bad-token');

	const expected = bindingNonce(challenge.nonce, {
		userId: user.id,
		act: challenge.act,
		meaning: challenge.meaning,
		targetType: challenge.target_type,
		targetId: Number(challenge.target_id),
		revision: challenge.target_revision
	});
	if (claims.nonce !== expected) return refuse(actor, challenge, 'nonce-mismatch');
	const linked = await ssoIdentities.userOf(db(), c.issuer, String(claims.sub ?? ''));
	if (linked !== user.id)
		return refuse(actor, challenge, 'other-subject', { subject: String(claims.sub ?? '') });
	const verdict = signingLoginVerdict(
		claims.auth_time,
		new Date(challenge.created_at).getTime() / 1000,
		Date.now() / 1000,
		c.freshLoginSeconds
	);
	const authTime =
		typeof claims.auth_time === 'number' ? new Date(claims.auth_time * 1000).toISOString() : null;
	if (!verdict.ok)
		return refuse(actor, challenge, verdict.reason, { authTime, ageSeconds: verdict.ageSeconds });

	await db().transaction(async (trx) => {
		await signingChallenges.settle(trx, Number(challenge.id), 'confirmed');
		await recordEvent(trx, actor, {
			projectId: Number(challenge.project_id),
			action: 'signature.reauthenticated',
			subjectType: challenge.target_type,
			subjectId: Number(challenge.target_id),
			after: {
				act: challenge.act,
				revision: challenge.target_revision,
				method: PROVIDER_REAUTH_METHOD,
				issuer: c.issuer,
				subject: String(claims.sub),
				authTime,
				ageSeconds: verdict.ageSeconds
			}
		});
	});
	const confirmation = confirmedByProviderLogin(user.id, {
		act: challenge.act,
		targetType: challenge.target_type,
		targetId: Number(challenge.target_id),
		revision: challenge.target_revision
	});
	return {
		pending: challenge,
		signer: { id: user.id, email: user.email, name: user.display_name, confirmation }
	};
}

/** After the act: what came of the confirmed signature (kept with the challenge). */
export const settleProviderSigning = (id: number, outcome: string) =>
	signingChallenges.settle(db(), id, outcome);
