import { adminOnly, everyone, type Caller, type Outcome, type RouteCase } from './types';

// Single sign-on: the sign-in button's route, the fresh login before signing, and the mapping of
// identity-provider groups to project roles (npm test configures the identity-provider stand-in).
const signedIn = (anon: Outcome): Record<Caller, Outcome> => ({ ...everyone('ok'), anonymous: anon });

export const cases: RouteCase[] = [
	// Public: the start of a sign-in (a signed-in caller is sent on to the target).
	{ route: '/signin/sso', method: 'GET', path: '/signin/sso', expect: everyone('ok') },
	// Starting the flow answers a redirect to the provider for everyone.
	{
		route: '/signin/sso',
		method: 'ACTION default',
		path: '/signin/sso',
		body: { redirectTo: '/' },
		expect: everyone('ok')
	},
	{
		route: '/signin/fresh',
		method: 'GET',
		path: '/signin/fresh?redirectTo=/account',
		expect: signedIn('signin')
	},
	{
		route: '/signin/fresh',
		method: 'ACTION default',
		path: '/signin/fresh',
		body: { redirectTo: '/account' },
		expect: signedIn('signin')
	},
	// A password session has no fresh provider login: the page says so (200) instead of going on.
	{
		route: '/signin/fresh/done',
		method: 'GET',
		path: '/signin/fresh/done?redirectTo=/account',
		expect: signedIn('signin')
	},
	// The provider's answer to a signing request: without a pending signature it is refused (200, words).
	{
		route: '/signin/sign/callback',
		method: 'GET',
		path: '/signin/sign/callback?state=none&code=none',
		expect: signedIn('signin')
	},
	{
		route: '/admin/projects/[key=projectKey]/groups',
		method: 'GET',
		path: '/admin/projects/{key}/groups',
		expect: adminOnly()
	},
	{
		route: '/admin/projects/[key=projectKey]/groups',
		method: 'ACTION add',
		path: '/admin/projects/{key}/groups',
		body: { group: '', role: '' },
		expect: adminOnly()
	},
	{
		route: '/admin/projects/[key=projectKey]/groups',
		method: 'ACTION setRole',
		path: '/admin/projects/{key}/groups',
		body: { id: 'x', role: 'boss' },
		expect: adminOnly()
	},
	{
		route: '/admin/projects/[key=projectKey]/groups',
		method: 'ACTION remove',
		path: '/admin/projects/{key}/groups',
		body: { id: '0' },
		expect: adminOnly()
	}
];
