import { createHash } from 'node:crypto';
import { AUTH_TIME_SKEW_SECONDS } from './sso-rules';

// The rules of signing through a fresh login at the identity provider that need no I/O (unit tested).
//
// The rule, as the methods page and DEVELOPERS.md state it: a signature of an account that signs in
// only through the identity provider is confirmed when the provider's ID token for this very signing
// request (its nonce and state name the pending signature) says the person authenticated
// (auth_time, OpenID Connect Core 1.0 section 2)
//   - not before the app sent them to the provider (we ask with max_age=0 and prompt=login, section
//     3.1.2.1, and do not trust that the provider obeyed), allowing AUTH_TIME_SKEW_SECONDS of clock
//     difference, and
//   - at most `maxAgeSeconds` (OIDC_FRESH_LOGIN_SECONDS, default 300 s = 5 minutes) before the answer
//     arrives, and not in the future beyond the same skew.
// The subject (sub) must be the provider identity linked to the signer's account.

/** What a pending signature is about: the ID token's nonce commits to exactly this. */
export interface SigningBinding {
	userId: number;
	act: string;
	meaning: string;
	targetType: string;
	targetId: number;
	revision: number;
}

/**
 * The nonce sent to the provider (OpenID Connect Core 1.0 section 3.1.2.1 and 3.1.3.7 item 11): the
 * SHA-256 of a random salt and the binding, so the ID token that comes back carries a value that only
 * this pending signature (meaning, subject, revision, signer) reproduces.
 */
export function bindingNonce(salt: string, b: SigningBinding): string {
	const text = JSON.stringify([salt, b.userId, b.act, b.meaning, b.targetType, b.targetId, b.revision]);
	return createHash('sha256').update(text, 'utf8').digest('base64url');
}

export const SIGNING_REFUSALS = {
	'unknown-state':
		'This answer of the identity provider belongs to no signature that is waiting: nothing was signed.',
	replayed:
		'This answer of the identity provider was used already (a sign-in answer counts once): nothing was signed. Start the signature again.',
	expired: 'The signature waited too long for the identity provider: nothing was signed. Start it again.',
	'other-user': 'This signature was started by another account: nothing was signed.',
	'provider-error': 'The identity provider did not confirm the sign-in: nothing was signed.',
	'bad-token': 'The identity provider’s answer could not be verified: nothing was signed.',
	'nonce-mismatch':
		'The identity provider’s answer was made for a different signature (nonce): nothing was signed.',
	'other-subject':
		'You signed in at the identity provider as another person than the signer: nothing was signed.',
	'no-auth-time': 'The identity provider did not say when you signed in (auth_time): nothing was signed.',
	'login-before-request':
		'The identity provider did not ask for your credentials again: its sign-in is older than this signature request, so nothing was signed. Sign in again at the identity provider.',
	'login-too-old':
		'The sign-in at the identity provider is older than allowed for a signature: nothing was signed. Sign in again at the identity provider.',
	'login-in-future':
		'The identity provider reported a sign-in time in the future (the clocks disagree): nothing was signed.'
} as const;
export type SigningRefusal = keyof typeof SIGNING_REFUSALS;

/**
 * Whether a provider login at `authTime` (seconds since 1970) confirms a signature requested at
 * `requestedAt` and answered at `now` (both seconds), for the rule above.
 */
export function signingLoginVerdict(
	authTime: unknown,
	requestedAt: number,
	now: number,
	maxAgeSeconds: number
): { ok: true; ageSeconds: number } | { ok: false; reason: SigningRefusal; ageSeconds: number | null } {
	if (typeof authTime !== 'number' || !Number.isFinite(authTime))
		return { ok: false, reason: 'no-auth-time', ageSeconds: null };
	const age = Math.round(now - authTime);
	if (authTime > now + AUTH_TIME_SKEW_SECONDS)
		return { ok: false, reason: 'login-in-future', ageSeconds: age };
	if (age > maxAgeSeconds) return { ok: false, reason: 'login-too-old', ageSeconds: age };
	if (authTime < requestedAt - AUTH_TIME_SKEW_SECONDS)
		return { ok: false, reason: 'login-before-request', ageSeconds: age };
	return { ok: true, ageSeconds: Math.max(0, age) };
}

/** How long a pending signature waits for the provider's answer. */
export const SIGNING_CHALLENGE_MINUTES = 10;

/** The words the signature record and the audit trail carry for this way of confirming the signer. */
export const PROVIDER_REAUTH_METHOD = 'identity provider re-authentication';
