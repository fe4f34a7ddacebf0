import { describe, expect, it } from 'vitest';
import { bindingNonce, signingLoginVerdict } from '../../../src/lib/server/identity/signing-rules';

// The rule of a signature confirmed at the identity provider: auth_time (OpenID Connect Core 1.0
// section 2) not before the signing request (30 s of clock difference allowed), at most max-age
// seconds before the answer, not in the future; and a nonce that names exactly one pending signature.

const requested = 1_800_000_000;
const now = requested + 40;

describe('signingLoginVerdict', () => {
	it.each([
		[requested + 5, true, null],
		[requested - 30, true, null],
		[requested - 31, false, 'login-before-request'],
		[now - 301, false, 'login-too-old'],
		[now + 31, false, 'login-in-future'],
		[now + 30, true, null],
		[null, false, 'no-auth-time'],
		['1800000005', false, 'no-auth-time'],
		[Number.NaN, false, 'no-auth-time']
	] as const)('auth_time %s: ok %s (%s)', (authTime, ok, reason) => {
		const v = signingLoginVerdict(authTime, requested, now, 300);
		expect(v.ok).toBe(ok);
		if (!v.ok) expect(v.reason).toBe(reason);
	});

	it('an old login is refused by the 5-minute limit even when the request itself is old', () => {
		// Requested 10 minutes ago, logged in just after: the answer came too late.
		const v = signingLoginVerdict(requested + 1, requested, requested + 600, 300);
		expect(v).toEqual({ ok: false, reason: 'login-too-old', ageSeconds: 599 });
	});
});

describe('bindingNonce', () => {
	const b = {
		userId: 7,
		act: 'requirement.approve',
		meaning: 'I approve this requirement revision as correct and verifiable.',
		targetType: 'requirement',
		targetId: 42,
		revision: 3
	};
	it('is the same for the same salt and signature, and differs when any part of the signature differs', () => {
		const n = bindingNonce('salt-1', b);
		expect(bindingNonce('salt-1', { ...b })).toBe(n);
		expect(n).toMatch(/^[A-Za-z0-9_-]{43}$/);
		const others = [
			bindingNonce('salt-2', b),
			bindingNonce('salt-1', { ...b, userId: 8 }),
			bindingNonce('salt-1', { ...b, act: 'requirement.return' }),
			bindingNonce('salt-1', { ...b, meaning: b.meaning + ' ' }),
			bindingNonce('salt-1', { ...b, targetType: 'evidence' }),
			bindingNonce('salt-1', { ...b, targetId: 43 }),
			bindingNonce('salt-1', { ...b, revision: 4 })
		];
		expect(new Set([n, ...others]).size).toBe(others.length + 1);
	});
});
