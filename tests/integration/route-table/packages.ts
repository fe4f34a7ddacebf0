import { createBaseline, createPackageRecord, testDb } from '../../factories';
import type { PrepareContext } from '../authorization.test';
import { membersOnly, rolesOnly, type RouteCase } from './types';

// Data packages: certifiers (and admins) generate them, every member reads their state and downloads
// them. The API POST bodies carry an unknown field (400 after the access decision), so the table
// queues nothing there; the page actions queue a package for the roles let through (the worker builds
// the small ones). The package read here is a record that was never built: its downloads answer 409.

export const cases: RouteCase[] = [
	{
		route: '/p/[key=projectKey]/baselines/[id=id]',
		method: 'ACTION package',
		path: '/p/{key}/baselines/{pkgBaselineId}',
		expect: rolesOnly(['certifier'])
	},
	{
		route: '/p/[key=projectKey]/baselines',
		method: 'ACTION package',
		path: '/p/{key}/baselines',
		expect: rolesOnly(['certifier'])
	},
	{
		route: '/api/v1/projects/[key=projectKey]/baselines/[id=id]/package',
		method: 'POST',
		path: '/api/v1/projects/{key}/baselines/{pkgBaselineId}/package',
		body: { bogus: 1 },
		expect: rolesOnly(['certifier'], 401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/packages',
		method: 'POST',
		path: '/api/v1/projects/{key}/packages',
		body: { bogus: 1 },
		expect: rolesOnly(['certifier'], 401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/packages',
		method: 'GET',
		path: '/api/v1/projects/{key}/packages',
		expect: membersOnly(401)
	},
	...['', '/report.pdf', '/archive.zip'].map((f) => ({
		route: `/api/v1/projects/[key=projectKey]/packages/[pkg=id]${f}`,
		method: 'GET',
		path: `/api/v1/projects/{key}/packages/{packageId}${f}`,
		expect: membersOnly(401)
	}))
];

export async function prepare(ctx: PrepareContext): Promise<Record<string, string>> {
	const p = await testDb()('projects').where({ key: ctx.projectKey }).first('id');
	const b = await createBaseline(Number(p.id), 'Package route table baseline');
	const pkg = await createPackageRecord(Number(p.id), Number(b.id));
	return { pkgBaselineId: String(b.id), packageId: String(pkg.id) };
}
