import { SvelteKitAuth } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import { decode } from '@auth/core/jwt';
import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { OIDCConfig } from '@auth/core/providers';
import { config } from './config';
import type { OwnedKind, ProjectRow, UserRow } from './identity/repo';
import {
	allows,
	capabilities,
	rolesFor,
	type ActingRole,
	type Capabilities,
	type Capability
} from './identity/roles';
import { signInForm } from './identity/schema';
import {
	activeIdentity,
	activeUser,
	checkCredentials,
	consumePrecheck,
	projectByKey,
	projectOwning,
	roleIn,
	type MemberOf
} from './identity/service';
import { profileFromClaims, ssoSignIn } from './identity/sso';
import type { SsoRefusal } from './identity/sso-rules';

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
	// Errors of a provider sign-in (provider unreachable, refused) come back to the sign-in page.
	pages: { signIn: '/signin', error: '/signin' },
	providers: [
		...oidcProviders(),
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
		signIn({ user, account }) {
			// A refusal of ssoSignIn (disabled account, unverified address ...) is shown by its code.
			const refused = account?.provider === 'oidc' ? (user as SsoUser).refused : undefined;
			return refused ? `/signin?sso=${refused}` : true;
		},
		jwt({ token, user, account }) {
			if (account?.provider === 'oidc') {
				// Auth.js gives the user a random id; ours is the account ssoSignIn found or created. The
				// provider's auth_time is kept in the session: signing asks how recent that login is.
				const u = user as SsoUser;
				token.sub = String(u.loopwardenUserId);
				token.idp = 'oidc';
				token.authTime = u.authTime ?? null;
			} else if (user?.id) token.sub = user.id;
			return token;
		},
		session({ session, token }) {
			if (session.user && token.sub) session.user.id = token.sub;
			return session;
		}
	}
});

/** What the OIDC provider's profile() hands to the callbacks besides Auth.js's own fields. */
interface SsoUser {
	loopwardenUserId?: number;
	authTime?: number | null;
	refused?: SsoRefusal;
}

/** auth_time from the ID token (already validated by Auth.js), also when the claims came from userinfo. */
function authTimeOf(claims: Record<string, unknown>, idToken: unknown): number | null {
	if (typeof claims.auth_time === 'number') return claims.auth_time;
	if (typeof idToken !== 'string') return null;
	try {
		const payload = JSON.parse(Buffer.from(idToken.split('.')[1] ?? '', 'base64url').toString('utf8'));
		return typeof payload.auth_time === 'number' ? payload.auth_time : null;
	} catch {
		return null;
	}
}

/**
 * The identity provider, when OIDC_ISSUER, OIDC_CLIENT_ID and OIDC_CLIENT_SECRET are set (config.oidc).
 * Auth.js runs the authorization-code flow with PKCE, state and nonce and validates the ID token;
 * profile() then signs the person in on our side (identity/sso.ts: account, roles from groups, audit).
 */
function oidcProviders(): OIDCConfig<Record<string, unknown>>[] {
	const c = config.oidc;
	if (!c) return [];
	return [
		{
			id: 'oidc',
			name: c.name,
			type: 'oidc',
			issuer: c.issuer,
			clientId: c.clientId,
			clientSecret: c.clientSecret,
			checks: ['pkce', 'state', 'nonce'],
			authorization: { params: { scope: c.scope } },
			idToken: !c.useUserinfo,
			async profile(claims, tokens) {
				const authTime = authTimeOf(claims, tokens.id_token);
				const outcome = await ssoSignIn(profileFromClaims(c.issuer, claims, c.groupsClaim, authTime));
				const base = { id: String(claims.sub ?? ''), email: String(claims.email ?? '') };
				const extra: SsoUser =
					'refused' in outcome
						? { refused: outcome.refused }
						: { loopwardenUserId: outcome.userId, authTime };
				return { ...base, ...extra };
			}
		}
	];
}

// Decrypting the session JWT (HKDF key derivation, then AES-CBC and HMAC) costs more than the rest of
// a small request. The cookie is immutable once issued, so its verified claims are kept here by the
// exact cookie value; the expiry is checked on every use and the user is still read from the database.
interface SessionClaims {
	sub: number;
	iat: number;
	exp: number;
	/** 'oidc' when the session began with a sign-in at the identity provider. */
	idp: string | null;
	/** That sign-in's auth_time (seconds since 1970), as the provider stated it. */
	authTime: number | null;
}
const verified = new Map<string, SessionClaims>();
const VERIFIED_MAX = 5_000;

async function sessionClaims(token: string, cookieName: string) {
	const hit = verified.get(token);
	if (hit) return hit;
	let payload: { sub?: unknown; iat?: unknown; exp?: unknown; idp?: unknown; authTime?: unknown } | null;
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
	const claims: SessionClaims = {
		sub,
		iat,
		exp,
		idp: typeof payload?.idp === 'string' ? payload.idp : null,
		authTime: typeof payload?.authTime === 'number' ? payload.authTime : null
	};
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

/**
 * The sign-in at the identity provider that the request's session began with: its auth_time, for
 * fresh-login checks (identity/fresh-login.ts). Null for a password session, an API token, no session.
 */
export async function sessionProviderLogin(
	event: RequestEvent
): Promise<{ userId: number; authTime: number | null } | null> {
	if (event.locals.apiToken) return null;
	const name = SESSION_COOKIES.find((n) => event.cookies.get(n));
	// A cookie split into chunks is never one of ours in practice (the token is small): not fresh.
	if (!name) return null;
	const claims = await sessionClaims(event.cookies.get(name)!, name);
	if (!claims || claims.exp <= Date.now() / 1000 || claims.idp !== 'oidc') return null;
	return { userId: claims.sub, authTime: claims.authTime };
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

/** What a route addresses in a project: the project by its key, a resource by its id, or both. */
export interface ProjectTarget {
	/** The project key of the address; with a resource id, the resource must belong to it. */
	project?: string;
	requirement?: number;
	model?: number;
	evidence?: number;
	run?: number;
	baseline?: number;
	import?: number;
	finding?: number;
}

/** The kind of resource a target names by id (never when it names only the project). */
type KindOf<T> = { [K in OwnedKind]: T extends Record<K, number> ? K : never }[OwnedKind];

export interface Access<T extends ProjectTarget = ProjectTarget> {
	user: UserRow;
	project: ProjectRef;
	/** The role the caller acts with: the member's (or the API token's) role, or 'admin' where the site-administrator rule allows what that role would not. */
	role: ActingRole;
	/** The resource addressed by id, once it is known to belong to `project`. */
	resource: [KindOf<T>] extends [never] ? null : { kind: KindOf<T>; id: number };
	/** The capability flags from the one role table; pages show their buttons from these. */
	can: Capabilities;
}

/** A page's address /p/[key]/<kind>s/[id]: the resource of that id in the project of that key. */
export function inAddress<K extends OwnedKind>(
	params: { key?: string; id?: string },
	kind: K
): { project: string } & Record<K, number> {
	return { project: params.key!, [kind]: Number(params.id) } as { project: string } & Record<K, number>;
}

type ProjectRef = Pick<ProjectRow, 'id' | 'key' | 'name' | 'description'>;

const KIND_WORDS: Record<OwnedKind, string> = {
	requirement: 'requirement',
	model: 'model',
	evidence: 'evidence',
	run: 'analysis run',
	baseline: 'baseline',
	finding: 'finding',
	import: 'import'
};

function ownedOf(target: ProjectTarget): { kind: OwnedKind; id: number } | null {
	const given = (Object.keys(KIND_WORDS) as OwnedKind[]).filter((k) => target[k] !== undefined);
	if (given.length > 1) throw new Error(`access(): one resource at a time, not ${given.join(' and ')}`);
	if (!given.length) {
		if (target.project === undefined) throw new Error('access(): name a project or a resource');
		return null;
	}
	return { kind: given[0], id: target[given[0]]! };
}

const refOf = (p: ProjectRef): ProjectRef => ({
	id: Number(p.id),
	key: p.key,
	name: p.name,
	description: p.description
});

/**
 * The one access decision for every page, form action and endpoint.
 * - 'account': any signed-in user (their own account).
 * - 'site': site administration; signed-in site administrators only, never through an API token.
 * - a project target with the capability the route needs (default 'read'): the caller must be a
 *   member of the project (a site administrator always is), the resource must belong to it, and the
 *   role table (identity/roles.ts) must allow the capability for the caller's role.
 * Sign-in is checked before anything is looked up, so an anonymous caller learns nothing about which
 * projects or ids exist (401 for the API, the sign-in page otherwise). A resource of another project
 * addressed through this project's URL is a 404, like one that does not exist. An API token is
 * scoped to one project and acts with its own role only, while its owner is still a member (or a
 * site administrator).
 */
export async function access(event: RequestEvent, target: 'account' | 'site'): Promise<{ user: UserRow }>;
export async function access<T extends ProjectTarget>(
	event: RequestEvent,
	target: T,
	need?: Capability
): Promise<Access<T>>;
export async function access(
	event: RequestEvent,
	target: 'account' | 'site' | ProjectTarget,
	need: Capability = 'read'
): Promise<{ user: UserRow }> {
	const user = event.locals.user;
	if (!user) unauthenticated(event);
	const token = event.locals.apiToken;
	if (target === 'account') return { user };
	if (target === 'site') {
		if (!user.site_admin || token) error(403, { message: 'Only site administrators may do this.' });
		return { user };
	}
	const resource = ownedOf(target);
	// A session's memberships were read with the user at the start of this request.
	const memberships = token ? null : event.locals.memberships;

	let project: ProjectRef | undefined;
	if (target.project !== undefined) {
		project = memberships?.find((m) => m.key === target.project) ?? (await projectByKey(target.project));
		if (!project) error(404, { message: `There is no project ${target.project}.` });
	} else {
		const { kind, id } = resource!;
		project = await projectOwning(kind, id);
		if (!project) error(404, { message: `There is no ${KIND_WORDS[kind]} ${id}.` });
	}
	project = refOf(project);

	if (token && token.projectId !== project.id)
		error(403, { message: `This API token is scoped to another project, not ${project.key}.` });
	let role: ActingRole | undefined;
	// A token acts with its own role, and only while its owner is still a member (or a site admin).
	if (token) role = user.site_admin || (await roleIn(user.id, project.id)) ? token.role : undefined;
	else {
		const member = memberships
			? memberships.find((m) => Number(m.id) === project.id)?.role
			: await roleIn(user.id, project.id);
		role = member ?? (user.site_admin ? 'admin' : undefined);
	}
	if (!role) error(403, { message: `You are not a member of project ${project.key}.` });

	// Addressed through a project's URL: the resource must be that project's (checked after membership,
	// so a non-member learns nothing about the project's ids either).
	if (resource && target.project !== undefined) {
		const owner = await projectOwning(resource.kind, resource.id);
		if (!owner || Number(owner.id) !== project.id)
			error(404, { message: `There is no ${KIND_WORDS[resource.kind]} ${resource.id} in ${project.key}.` });
	}

	const siteAdmin = user.site_admin && !token;
	if (!allows(role, siteAdmin, need))
		error(403, {
			message: `Your role in ${project.key} (${role}) does not allow this; it needs ${rolesFor(need)}.`
		});
	// A site administrator doing what their own role in the project would not acts as 'admin' (so a
	// review, for one, records under which rule it was allowed).
	const acting = allows(role, false, need) ? role : 'admin';
	const decided: Omit<Access, 'resource'> & { resource: { kind: OwnedKind; id: number } | null } = {
		user,
		project,
		role: acting,
		resource,
		can: capabilities(role, siteAdmin)
	};
	return decided;
}
