import {
	createModel,
	createModelVersion,
	createRequirement,
	createRun,
	createSpec,
	testDb
} from '../../factories';
import { ENGINE_VERSION } from '../../../src/lib/stability/index';
import { membersOnly, rolesOnly, type RouteCase } from './types';
import type { PrepareContext } from '../authorization.test';

// Models, versions, analyses and the trace graph: every member reads; analysts (and admins) create
// models and publish versions. Write bodies are invalid (400) so the table changes nothing.

const analysts = rolesOnly(['analyst']);
const apiAnalysts = rolesOnly(['analyst'], 401);

export const cases: RouteCase[] = [
	{ route: '/p/[key=projectKey]/models', method: 'GET', path: '/p/{key}/models', expect: membersOnly() },
	{ route: '/p/[key=projectKey]/models/new', method: 'GET', path: '/p/{key}/models/new', expect: analysts },
	{
		route: '/p/[key=projectKey]/models/new',
		method: 'ACTION create',
		path: '/p/{key}/models/new',
		body: { name: '' },
		expect: analysts
	},
	{
		route: '/p/[key=projectKey]/models/[id=id]',
		method: 'GET',
		path: '/p/{key}/models/{modelId}',
		expect: membersOnly()
	},
	{
		route: '/p/[key=projectKey]/models/[id=id]/publish',
		method: 'GET',
		path: '/p/{key}/models/{modelId}/publish',
		expect: analysts
	},
	{
		route: '/p/[key=projectKey]/models/[id=id]/publish',
		method: 'ACTION publish',
		path: '/p/{key}/models/{modelId}/publish',
		body: { note: 'route table', operatingPoints: '[{"label": "x", "model": {"kind": "tf"' },
		expect: analysts
	},
	{
		route: '/p/[key=projectKey]/models/[id=id]/v/[version=id]',
		method: 'GET',
		path: '/p/{key}/models/{modelId}/v/1',
		expect: membersOnly()
	},
	{ route: '/p/[key=projectKey]/graph', method: 'GET', path: '/p/{key}/graph', expect: membersOnly() },
	{
		route: '/api/v1/projects/[key=projectKey]/models',
		method: 'GET',
		path: '/api/v1/projects/{key}/models',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/models',
		method: 'POST',
		path: '/api/v1/projects/{key}/models',
		body: { name: '' },
		expect: apiAnalysts
	},
	{
		route: '/api/v1/projects/[key=projectKey]/models/[id=id]/versions',
		method: 'GET',
		path: '/api/v1/projects/{key}/models/{modelId}/versions',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/models/[id=id]/versions',
		method: 'POST',
		path: '/api/v1/projects/{key}/models/{modelId}/versions',
		body: { note: 'route table', operatingPoints: [] },
		expect: apiAnalysts
	},
	{
		route: '/api/v1/requirements/[id=id]/analyses',
		method: 'GET',
		path: '/api/v1/requirements/{anReqId}/analyses',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/analyses/[id=id]',
		method: 'GET',
		path: '/api/v1/analyses/{runId}',
		expect: membersOnly(401)
	}
];

export async function prepare(ctx: PrepareContext): Promise<Record<string, string>> {
	const p = await testDb()('projects').where({ key: ctx.projectKey }).first('id');
	const projectId = Number(p.id);
	const model = await createModel(projectId, { ownerId: ctx.users.analyst.id, name: 'route table loop' });
	await createModelVersion(model.id);
	const req = await createRequirement(projectId, { ownerId: ctx.users.engineer.id });
	await createSpec(req.id, { modelId: model.id, check: { type: 'circle', sector: [0, 1] } });
	const run = await createRun(req.id, { engineVersion: ENGINE_VERSION, verdict: 'pass' });
	return { modelId: String(model.id), anReqId: String(req.id), runId: String(run.id) };
}
