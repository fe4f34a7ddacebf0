import { createBaseline, testDb } from '../../factories';
import { membersOnly, rolesOnly, type RouteCase } from './types';
import type { PrepareContext } from '../authorization.test';

// Trace matrix, exports, baselines and coverage: every member reads and exports; certifiers (and
// admins) freeze baselines; outsiders are refused. Freeze bodies have an empty label (400), so the
// table creates no baseline.

export const cases: RouteCase[] = [
	{ route: '/p/[key=projectKey]/trace', method: 'GET', path: '/p/{key}/trace', expect: membersOnly() },
	{ route: '/p/[key=projectKey]/coverage', method: 'GET', path: '/p/{key}/coverage', expect: membersOnly() },
	{
		route: '/p/[key=projectKey]/baselines',
		method: 'GET',
		path: '/p/{key}/baselines',
		expect: membersOnly()
	},
	{
		route: '/p/[key=projectKey]/baselines',
		method: 'ACTION freeze',
		path: '/p/{key}/baselines',
		body: { label: '', note: '' },
		expect: rolesOnly(['certifier'])
	},
	{
		route: '/p/[key=projectKey]/baselines/[id=id]',
		method: 'GET',
		path: '/p/{key}/baselines/{baselineId}',
		expect: membersOnly()
	},
	{
		route: '/p/[key=projectKey]/baselines/compare',
		method: 'GET',
		path: '/p/{key}/baselines/compare?from={baselineId}&to=now',
		expect: membersOnly()
	},
	{
		route: '/api/v1/projects/[key=projectKey]/trace-matrix',
		method: 'GET',
		path: '/api/v1/projects/{key}/trace-matrix',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/preferences/trace-columns',
		method: 'GET',
		path: '/api/v1/projects/{key}/preferences/trace-columns',
		expect: membersOnly(401)
	},
	// Every member sets their own columns; the body names an unknown column (400), so nothing is stored.
	{
		route: '/api/v1/projects/[key=projectKey]/preferences/trace-columns',
		method: 'PUT',
		path: '/api/v1/projects/{key}/preferences/trace-columns',
		body: { columns: ['no-such-column'] },
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/live',
		method: 'GET',
		path: '/api/v1/projects/{key}/live',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/trace-matrix.xlsx',
		method: 'GET',
		path: '/api/v1/projects/{key}/trace-matrix.xlsx',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/trace-matrix.csv',
		method: 'GET',
		path: '/api/v1/projects/{key}/trace-matrix.csv',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/baselines',
		method: 'GET',
		path: '/api/v1/projects/{key}/baselines',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/baselines',
		method: 'POST',
		path: '/api/v1/projects/{key}/baselines',
		body: { label: '' },
		expect: rolesOnly(['certifier'], 401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/baselines/[id=id]',
		method: 'GET',
		path: '/api/v1/projects/{key}/baselines/{baselineId}',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/baselines/[id=id]/trace-matrix.xlsx',
		method: 'GET',
		path: '/api/v1/projects/{key}/baselines/{baselineId}/trace-matrix.xlsx',
		expect: membersOnly(401)
	}
];

/** One baseline in the team project (an empty manifest is a valid frozen state). */
export async function prepare(ctx: PrepareContext): Promise<Record<string, string>> {
	const p = await testDb()('projects').where({ key: ctx.projectKey }).first('id');
	const b = await createBaseline(Number(p.id));
	return { baselineId: String(b.id) };
}
