// The people of the local identity-provider stand-in (invented). Every one signs in there with the
// password below; `groups` is what the provider sends in the ID token's groups claim. The demo maps
// the vx7-* groups to roles in project VX7 (scripts/seed.ts); tests map them to their own projects.
export const FAKE_OIDC_PASSWORD = 'loopwarden-demo';

export interface FakeOidcUser {
	sub: string;
	email: string;
	name: string;
	groups: string[];
}

export const FAKE_OIDC_USERS: FakeOidcUser[] = [
	{
		sub: 'u-1001',
		email: 'rhea.ostrander@idp.demo.loopwarden.test',
		name: 'Rhea Ostrander',
		groups: ['vx7-engineering', 'all-staff']
	},
	{
		sub: 'u-1002',
		email: 'tomas.kell@idp.demo.loopwarden.test',
		name: 'Tomas Kell',
		groups: ['vx7-analysis', 'all-staff']
	},
	{
		sub: 'u-1003',
		email: 'ines.varga@idp.demo.loopwarden.test',
		name: 'Ines Varga',
		groups: ['vx7-certification', 'all-staff']
	},
	{
		sub: 'u-1004',
		email: 'noor.blake@idp.demo.loopwarden.test',
		name: 'Noor Blake',
		groups: ['vx7-readers', 'all-staff']
	},
	{ sub: 'u-1005', email: 'pavel.ruud@idp.demo.loopwarden.test', name: 'Pavel Ruud', groups: ['all-staff'] },
	// Reviewers who sign at the provider (the signing tests use them; the demo maps no group of theirs).
	{
		sub: 'u-1006',
		email: 'mirela.stanek@idp.demo.loopwarden.test',
		name: 'Mirela Stanek',
		groups: ['design-review']
	},
	{
		sub: 'u-1007',
		email: 'oskar.lindvall@idp.demo.loopwarden.test',
		name: 'Oskar Lindvall',
		groups: ['design-review']
	},
	{
		sub: 'u-1008',
		email: 'hanne.quist@idp.demo.loopwarden.test',
		name: 'Hanne Quist',
		groups: ['design-review']
	}
];
