import { SvelteKitAuth } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import { decode } from '@auth/core/jwt';
import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { ProjectRow, UserRow } from './identity/repo';
import type { Role } from './identity/roles';
import { signInForm } from './identity/schema';
import {
	activeIdentity,
	activeUser,
	checkCredentials,
	consumePrecheck,
	projectByKey,
	roleIn,
	type MemberOf
} from './identity/service';

export const PRECHECK_HEADER = 'x-loopwarden-precheck';
const SESSION_MAX_AGE = 12 * 60 * 60;
/** Re-issue the session cookie (a rolling expiry) when it is older than this. */
const SESSION_REFRESH_AFTER = 10 * 60;
const SESSION_COOKIES = ['__Secure-authjs.session-token', 'authjs.session-token'];

// Auth.js issues and verifies the session (a signed, encrypted JWT cookie). The JWT only carries
// the user id: the account and its project roles are read from the database on every request,
// so disabling a user or removing a membership takes effect at once.
export const {
	handle: authHandle,
	signIn,
	signOut
} = SvelteKitAuth({
	trustHost: env.AUTH_TRUST_HOST === 'true',
	secret: env.AUTH_SECRET,
	session: { strategy: 'jwt', maxAge: SESSION_MAX_AGE },
	pages: { signIn: '/signin' },
	providers: [
		Credentials({
			credentials: { email: {}, password: {} },
			async authorize(raw, request) {
				// Our sign-in form checked (and recorded) the attempt already.
				const checkedId = consumePrecheck(request.headers.get(PRECHECK_HEADER));
				if (checkedId) {
					const u = await activeUser(checkedId);
					return u ? { id: String(u.id), email: u.email, name: u.display_name } : null;
				}
				// Anyone posting to the Auth.js endpoint directly gets the same checks and rate limit.
				const parsed = signInForm.safeParse(raw);
				if (!parsed.success) return null;
				try {
					const ip = request.headers.get('x-forwarded-for') ?? null;
					const user = await checkCredentials(parsed.data.email, parsed.data.password, ip);
					return { id: String(user.id), email: user.email, name: user.display_name };
				} catch {
					return null;
				}
			}
		})
	],
	callbacks: {
		jwt({ token, user }) {
			if (user?.id) token.sub = user.id;
			return token;
		},
		session({ session, token }) {
			if (session.user && token.sub) session.user.id = token.sub;
			return session;
		}
	}
});

// Decrypting the session JWT (HKDF key derivation, then AES-CBC and HMAC) costs more than the rest of
// a small request. The cookie is immutable once issued, so its verified claims are kept here by the
// exact cookie value; the expiry is checked on every use and the user is still read from the database.
const verified = new Map<string, { sub: number; iat: number; exp: number }>();
const VERIFIED_MAX = 5_000;

async function sessionClaims(token: string, cookieName: string) {
	const hit = verified.get(token);
	if (hit) return hit;
	let payload: { sub?: unknown; iat?: unknown; exp?: unknown } | null;
	try {
		payload = await decode({ token, secret: env.AUTH_SECRET ?? '', salt: cookieName });
	} catch {
		return null;
	}
	const sub = Number(payload?.sub);
	const iat = Number(payload?.iat);
	const exp = Number(payload?.exp);
	if (!Number.isInteger(sub) || sub <= 0 || !Number.isFinite(exp) || !Number.isFinite(iat)) return null;
	if (verified.size >= VERIFIED_MAX) verified.delete(verified.keys().next().value!);
	const claims = { sub, iat, exp };
	verified.set(token, claims);
	return claims;
}

/** The user id of the request's session, or null. Same rules as Auth.js's own session check. */
async function sessionUserId(event: RequestEvent): Promise<number | null> {
	const name = SESSION_COOKIES.find((n) => event.cookies.get(n));
	// No cookie, or a cookie Auth.js split into chunks: let Auth.js decide (and clean up).
	if (!name) {
		const chunked = event.cookies.getAll().some((c) => SESSION_COOKIES.some((n) => c.name.startsWith(n)));
		return chunked ? idOf(await event.locals.auth()) : null;
	}
	const claims = await sessionClaims(event.cookies.get(name)!, name);
	const now = Date.now() / 1000;
	if (!claims || claims.exp <= now) return null;
	// Rolling expiry: through Auth.js, which re-encrypts and sets the cookie with a fresh lifetime.
	if (now - claims.iat > SESSION_REFRESH_AFTER) return idOf(await event.locals.auth());
	return claims.sub;
}

function idOf(session: { user?: { id?: string } } | null): number | null {
	const id = Number(session?.user?.id);
	return Number.isInteger(id) && id > 0 ? id : null;
}

/** Resolve the signed-in user of a request and their projects (null when signed out or disabled). */
export async function identityFromSession(
	event: RequestEvent
): Promise<{ user: UserRow; memberships: MemberOf[] } | null> {
	const id = await sessionUserId(event);
	return id === null ? null : ((await activeIdentity(id)) ?? null);
}

function isApi(event: RequestEvent): boolean {
	return event.url.pathname.startsWith('/api/');
}

function unauthenticated(event: RequestEvent): never {
	if (isApi(event)) error(401, { message: 'Sign in or send an API token (Authorization: Bearer ...).' });
	const to = event.url.pathname + event.url.search;
	redirect(303, `/signin?redirectTo=${encodeURIComponent(to)}`);
}

/** Any signed-in, active user. */
export function requireUser(event: RequestEvent): UserRow {
	const user = event.locals.user;
	if (!user) unauthenticated(event);
	return user;
}

/** Site administrators only. */
export function requireAdmin(event: RequestEvent): UserRow {
	const user = requireUser(event);
	if (!user.site_admin || event.locals.apiToken)
		error(403, { message: 'Only site administrators may do this.' });
	return user;
}

export interface ProjectAccess {
	user: UserRow;
	project: Omit<ProjectRow, 'created_at'>;
	/** The member's role, or 'admin' for a site administrator who is not a member. */
	role: Role | 'admin';
}

/**
 * The one guard. Every load, form action and endpoint under a project calls it with the roles
 * allowed to do what it does; `roles` omitted means any member may (read access).
 * Site administrators may do everything. An API token is scoped to one project and one role.
 */
export async function requireRole(
	event: RequestEvent,
	projectKey: string,
	roles?: readonly Role[]
): Promise<ProjectAccess> {
	const user = requireUser(event);
	const token = event.locals.apiToken;
	// A session's memberships were read with the user at the start of this request.
	const member = token ? undefined : event.locals.memberships?.find((m) => m.key === projectKey);
	if (member) {
		const { role, ...project } = member;
		if (!roles || roles.includes(role) || user.site_admin) return { user, project, role };
		error(403, {
			message: `Your role in ${project.key} (${role}) does not allow this; it needs ${roles.join(' or ')}.`
		});
	}
	const project = await projectByKey(projectKey);
	if (!project) error(404, { message: `There is no project ${projectKey}.` });
	if (token && token.projectId !== project.id) {
		error(403, { message: `This API token is scoped to another project, not ${project.key}.` });
	}
	let role: Role | 'admin' | undefined;
	// A token acts with its own role, and only while its owner is still a member (or an admin).
	if (token) role = user.site_admin || (await roleIn(user.id, project.id)) ? token.role : undefined;
	else if (user.site_admin) role = (await roleIn(user.id, project.id)) ?? 'admin';
	else role = await roleIn(user.id, project.id);
	if (!role) error(403, { message: `You are not a member of project ${project.key}.` });
	const allowed = role === 'admin' || (user.site_admin && !token) || !roles || roles.includes(role);
	if (!allowed) {
		error(403, {
			message: `Your role in ${project.key} (${role}) does not allow this; it needs ${roles!.join(' or ')}.`
		});
	}
	return { user, project, role };
}
