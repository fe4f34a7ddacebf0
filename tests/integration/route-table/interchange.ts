import { createImportRecord, testDb } from '../../factories';
import { membersOnly, notInThisProject, rolesOnly, type RouteCase } from './types';
import type { PrepareContext } from '../authorization.test';

// Requirements in and out: every member exports and reads imports; engineers (and admins) import and
// confirm. The prepared import carries a problem, so a confirm in the table is refused (422) and
// changes nothing; upload bodies are not multipart (415), so no import is made.

export const cases: RouteCase[] = [
	{
		route: '/api/v1/projects/[key=projectKey]/requirements.reqif',
		method: 'GET',
		path: '/api/v1/projects/{key}/requirements.reqif',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/baselines/[id=id]/requirements.reqif',
		method: 'GET',
		path: '/api/v1/projects/{key}/baselines/{baselineId}/requirements.reqif',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/imports',
		method: 'GET',
		path: '/api/v1/projects/{key}/imports',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/imports',
		method: 'POST',
		path: '/api/v1/projects/{key}/imports',
		body: { format: 'csv' },
		expect: rolesOnly(['engineer'], 401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/imports/template.xlsx',
		method: 'GET',
		path: '/api/v1/projects/{key}/imports/template.xlsx',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/imports/[id=id]',
		method: 'GET',
		path: '/api/v1/imports/{importId}',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/imports/[id=id]/confirm',
		method: 'POST',
		path: '/api/v1/imports/{importId}/confirm',
		body: {},
		expect: rolesOnly(['engineer'], 401)
	},
	{ route: '/p/[key=projectKey]/imports', method: 'GET', path: '/p/{key}/imports', expect: membersOnly() },
	{
		route: '/p/[key=projectKey]/imports',
		method: 'ACTION upload',
		path: '/p/{key}/imports',
		body: { format: 'csv' },
		expect: rolesOnly(['engineer'])
	},
	{
		route: '/p/[key=projectKey]/imports/[id=id]',
		method: 'GET',
		path: '/p/{key}/imports/{importId}',
		expect: membersOnly()
	},
	{
		route: '/p/[key=projectKey]/imports/[id=id]',
		method: 'GET',
		path: '/p/{key}/imports/{otherImportId}',
		expect: notInThisProject(),
		edge: true
	},
	{
		route: '/p/[key=projectKey]/imports/[id=id]',
		method: 'ACTION remap',
		path: '/p/{key}/imports/{importId}',
		body: { mapping: '{' },
		expect: rolesOnly(['engineer'])
	},
	{
		route: '/p/[key=projectKey]/imports/[id=id]',
		method: 'ACTION confirm',
		path: '/p/{key}/imports/{importId}',
		body: {},
		expect: rolesOnly(['engineer'])
	}
];

/** An import preview with one problem in the team project (and one in the other project). */
export async function prepare(ctx: PrepareContext): Promise<Record<string, string>> {
	const db = testDb();
	const id = async (key: string) =>
		String(await createImportRecord(Number((await db('projects').where({ key }).first('id')).id)));
	return { importId: await id(ctx.projectKey), otherImportId: await id(ctx.otherProjectKey) };
}
