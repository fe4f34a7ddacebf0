import type { Role } from './roles';

// The rules of single sign-on that need no I/O (unit tested): reading the groups claim, choosing the
// role when several of a person's groups map to one project, and whether a provider login is fresh.

/**
 * The groups in a claim: an array of strings (the common form), or one string holding a single group.
 * Anything else (missing, numbers, objects) is no group at all, never an error: a person without
 * groups still signs in, with no project from the mapping.
 */
export function groupsOf(claims: Record<string, unknown>, claimName: string): string[] {
	const v = claims[claimName];
	const list = Array.isArray(v) ? v : typeof v === 'string' ? [v] : [];
	return [
		...new Set(list.filter((g): g is string => typeof g === 'string' && g.trim() !== '').map((g) => g.trim()))
	];
}

/**
 * When a person's groups map to several roles in one project, the first of this list wins. Roles
 * carry different rights rather than more or fewer, so the order is a fixed, stated choice: the
 * administrator sees it on the mapping page and maps groups so that it rarely matters.
 */
export const SSO_ROLE_PRECEDENCE: readonly Role[] = ['certifier', 'analyst', 'engineer', 'viewer'];

/** The role per project from the mapping rows that matched the person's groups. */
export function rolesFromGroups(
	rows: { project_id: number | string; group_name: string; role: Role }[]
): Map<number, { role: Role; groups: string[] }> {
	const out = new Map<number, { role: Role; groups: string[] }>();
	for (const r of rows) {
		const id = Number(r.project_id);
		const had = out.get(id);
		if (!had) out.set(id, { role: r.role, groups: [r.group_name] });
		else {
			had.groups.push(r.group_name);
			if (SSO_ROLE_PRECEDENCE.indexOf(r.role) < SSO_ROLE_PRECEDENCE.indexOf(had.role)) had.role = r.role;
		}
	}
	for (const v of out.values()) v.groups.sort();
	return out;
}

/** Clock difference tolerated between the identity provider and the app, in seconds. */
export const AUTH_TIME_SKEW_SECONDS = 30;

export type Freshness =
	| { fresh: true; ageSeconds: number }
	| { fresh: false; reason: 'none' | 'too-old' | 'future'; ageSeconds: number | null };

/**
 * Whether a provider login at `authTime` (the ID token's auth_time, seconds since 1970, OpenID
 * Connect Core 1.0 section 2) is recent enough: at most `maxAgeSeconds` ago. A time further in the
 * future than the tolerated skew is refused too (a wrong clock cannot make an old login look fresh).
 */
export function freshness(
	authTime: number | null | undefined,
	nowSeconds: number,
	maxAgeSeconds: number
): Freshness {
	if (typeof authTime !== 'number' || !Number.isFinite(authTime))
		return { fresh: false, reason: 'none', ageSeconds: null };
	const age = nowSeconds - authTime;
	if (age < -AUTH_TIME_SKEW_SECONDS) return { fresh: false, reason: 'future', ageSeconds: Math.round(age) };
	if (age > maxAgeSeconds) return { fresh: false, reason: 'too-old', ageSeconds: Math.round(age) };
	return { fresh: true, ageSeconds: Math.max(0, Math.round(age)) };
}

/** Why a sign-in through the identity provider was refused; the sign-in page shows the words. */
export const SSO_REFUSALS = {
	'no-subject': 'The identity provider sent no subject (sub) for you.',
	'no-email': 'The identity provider sent no e-mail address for you.',
	'unverified-email':
		'An account with your e-mail address exists, and the identity provider did not confirm the address as verified; ask an administrator to link your account.',
	disabled: 'Your Loopwarden account is disabled.'
} as const;
export type SsoRefusal = keyof typeof SSO_REFUSALS;
