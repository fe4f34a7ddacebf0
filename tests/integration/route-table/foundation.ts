import { adminOnly, everyone, membersOnly, type Caller, type Outcome, type RouteCase } from './types';

const signedIn = (anon: Outcome): Record<Caller, Outcome> => ({ ...everyone('ok'), anonymous: anon });

export const cases: RouteCase[] = [
	{ route: '/', method: 'GET', path: '/', expect: everyone('ok') },
	{ route: '/methods', method: 'GET', path: '/methods', expect: everyone('ok') },
	{ route: '/signin', method: 'GET', path: '/signin', expect: everyone('ok') },
	// An empty sign-in is a validation failure for everyone: the form is public.
	{
		route: '/signin',
		method: 'ACTION default',
		path: '/signin',
		body: { email: '', password: '' },
		expect: everyone('ok')
	},
	{ route: '/signout', method: 'GET', path: '/signout', expect: everyone('ok') },
	{ route: '/signout', method: 'ACTION default', path: '/signout', expect: everyone('ok') },
	{ route: '/forgot', method: 'GET', path: '/forgot', expect: everyone('ok') },
	{
		route: '/forgot',
		method: 'ACTION default',
		path: '/forgot',
		body: { email: 'not-an-address' },
		expect: everyone('ok')
	},
	// Token pages: an unknown token is a 404 for everyone (the token is the credential).
	{ route: '/reset/[token]', method: 'GET', path: '/reset/unknown-token', expect: everyone(404) },
	{
		route: '/reset/[token]',
		method: 'ACTION default',
		path: '/reset/unknown-token',
		body: { password: 'short', confirm: 'x' },
		expect: everyone('ok')
	},
	{ route: '/invitation/[token]', method: 'GET', path: '/invitation/unknown-token', expect: everyone(404) },
	{
		route: '/invitation/[token]',
		method: 'ACTION default',
		path: '/invitation/unknown-token',
		body: {},
		expect: everyone('ok')
	},
	{ route: '/account', method: 'GET', path: '/account', expect: signedIn('signin') },
	{
		route: '/account',
		method: 'ACTION rename',
		path: '/account',
		body: { displayName: '' },
		expect: signedIn('signin')
	},
	{
		route: '/account',
		method: 'ACTION password',
		path: '/account',
		body: { current: '', password: '', confirm: '' },
		expect: signedIn('signin')
	},
	{ route: '/admin', method: 'GET', path: '/admin', expect: adminOnly() },
	{
		route: '/admin',
		method: 'ACTION createProject',
		path: '/admin',
		body: { key: '', name: '' },
		expect: adminOnly()
	},
	{
		route: '/admin',
		method: 'ACTION setDisabled',
		path: '/admin',
		body: { userId: 'x', disabled: 'maybe' },
		expect: adminOnly()
	},
	{ route: '/admin/mail', method: 'GET', path: '/admin/mail', expect: adminOnly() },
	{
		route: '/admin/projects/[key=projectKey]',
		method: 'GET',
		path: '/admin/projects/{key}',
		expect: adminOnly()
	},
	{
		route: '/admin/projects/[key=projectKey]',
		method: 'ACTION invite',
		path: '/admin/projects/{key}',
		body: { email: 'bad', role: 'x' },
		expect: adminOnly()
	},
	{
		route: '/admin/projects/[key=projectKey]',
		method: 'ACTION setRole',
		path: '/admin/projects/{key}',
		body: { userId: '0', role: 'x' },
		expect: adminOnly()
	},
	{
		route: '/admin/projects/[key=projectKey]',
		method: 'ACTION remove',
		path: '/admin/projects/{key}',
		body: { userId: '0' },
		expect: adminOnly()
	},
	{ route: '/p/[key=projectKey]', method: 'GET', path: '/p/{key}', expect: membersOnly() },
	{ route: '/api/v1/health', method: 'GET', path: '/api/v1/health', expect: everyone('ok') }
];

cases.push(
	{
		route: '/account',
		method: 'ACTION createToken',
		path: '/account',
		body: { projectKey: '', role: 'x', label: '' },
		expect: signedIn('signin')
	},
	{
		route: '/account',
		method: 'ACTION revokeToken',
		path: '/account',
		body: { id: 'none' },
		expect: signedIn('signin')
	}
);

cases.push(
	{ route: '/admin/audit', method: 'GET', path: '/admin/audit', expect: adminOnly() },
	{ route: '/admin/audit', method: 'ACTION verify', path: '/admin/audit', expect: adminOnly() }
);

cases.push({
	route: '/api/v1/projects/[key=projectKey]',
	method: 'GET',
	path: '/api/v1/projects/{key}',
	expect: membersOnly(401)
});
