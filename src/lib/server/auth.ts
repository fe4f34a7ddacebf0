import { SvelteKitAuth } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { ProjectRow, UserRow } from './identity/repo';
import type { Role } from './identity/roles';
import { signInForm } from './identity/schema';
import { activeUser, checkCredentials, consumePrecheck, projectByKey, roleIn } from './identity/service';

export const PRECHECK_HEADER = 'x-loopwarden-precheck';

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
	session: { strategy: 'jwt', maxAge: 12 * 60 * 60 },
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

/** Resolve the signed-in user of a request (null when signed out or disabled). */
export async function userFromSession(event: RequestEvent): Promise<UserRow | null> {
	const session = await event.locals.auth();
	const id = Number(session?.user?.id);
	if (!Number.isInteger(id) || id <= 0) return null;
	return (await activeUser(id)) ?? null;
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
	project: ProjectRow;
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
	const project = await projectByKey(projectKey);
	if (!project) error(404, { message: `There is no project ${projectKey}.` });
	const token = event.locals.apiToken;
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
