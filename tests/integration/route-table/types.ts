// The role-by-route table: every page, form action and API endpoint with the outcome expected for
// each kind of caller. tests/integration/authorization.test.ts discovers the routes under src/routes
// and fails when one has no entry here. Add one file per area (requirements.ts, models.ts ...).

export const CALLERS = [
	'anonymous',
	'viewer',
	'engineer',
	'analyst',
	'certifier',
	'admin',
	'adminViewer',
	'outsider'
] as const;
// admin: a site administrator who is not a member of the project; adminViewer: a site administrator
// who is a viewer in it (the site-administrator rule must win over the lesser project role).
export type Caller = (typeof CALLERS)[number];

/**
 * ok: allowed (2xx, or a 303 that is not to /signin, or a 4xx validation failure from the action
 *     itself, which proves the guard let the caller through);
 * signin: redirected to /signin (pages) ; 401: API without credentials;
 * 403 / 404: refused.
 */
export type Outcome = 'ok' | 'signin' | 401 | 403 | 404;

export interface RouteCase {
	/** The route id as SvelteKit names it, e.g. "/p/[key=projectKey]/requirements". */
	route: string;
	/** GET for pages, "ACTION name" for form actions ("ACTION default"), or an HTTP method for +server.ts. */
	method: string;
	/** The concrete path; {key} is the team project's key, {id} etc. are filled by `prepare`. */
	path: string;
	/** Body for POST/PATCH cases (form fields for actions, JSON for the API). Use values that do not change data where possible. */
	body?: Record<string, unknown>;
	expect: Record<Caller, Outcome>;
	/** A case about the access decision's edges (ids that do not exist, other projects' resources): the
	 * request is refused before its body is read, so the fuzzing of inputs leaves it out. */
	edge?: true;
}

/**
 * An address of this project naming a resource that is not this project's (another project's, or
 * none at all): a 404 for every member, the site administrators included; a non-member is refused
 * before anything is looked up; an anonymous caller is sent to sign in (401 for the API).
 */
export const notInThisProject = (anon: Outcome = 'signin'): Record<Caller, Outcome> => ({
	anonymous: anon,
	viewer: 404,
	engineer: 404,
	analyst: 404,
	certifier: 404,
	admin: 404,
	adminViewer: 404,
	outsider: 403
});

/** Shorthand for the common patterns. */
export const everyone = (o: Outcome): Record<Caller, Outcome> =>
	Object.fromEntries(CALLERS.map((c) => [c, o])) as Record<Caller, Outcome>;

export const membersOnly = (anon: Outcome = 'signin'): Record<Caller, Outcome> => ({
	anonymous: anon,
	viewer: 'ok',
	engineer: 'ok',
	analyst: 'ok',
	certifier: 'ok',
	admin: 'ok',
	adminViewer: 'ok',
	outsider: 403
});

export const rolesOnly = (roles: Caller[], anon: Outcome = 'signin'): Record<Caller, Outcome> => ({
	anonymous: anon,
	viewer: roles.includes('viewer') ? 'ok' : 403,
	engineer: roles.includes('engineer') ? 'ok' : 403,
	analyst: roles.includes('analyst') ? 'ok' : 403,
	certifier: roles.includes('certifier') ? 'ok' : 403,
	admin: 'ok',
	adminViewer: 'ok',
	outsider: 403
});

export const adminOnly = (anon: Outcome = 'signin'): Record<Caller, Outcome> => ({
	anonymous: anon,
	viewer: 403,
	engineer: 403,
	analyst: 403,
	certifier: 403,
	admin: 'ok',
	adminViewer: 'ok',
	outsider: 403
});
