import {
	createBaseline,
	createEvidence,
	createPackageRecord,
	createModel,
	createModelVersion,
	createRequirement,
	createRun,
	createSpec,
	testDb
} from '../../factories';
import { ENGINE_VERSION } from '../../../src/lib/stability/index';
import type { PrepareContext } from '../authorization.test';
import { everyone, notInThisProject, type Caller, type Outcome, type RouteCase } from './types';

// The access decision's edges, for every route that takes an id: an id that does not exist, a
// resource of another project addressed through this project's URL, an unknown project key. Sign-in
// comes first, so an anonymous caller gets 401 (API) or the sign-in page, never a 404 that would tell
// which ids exist. The bodies are invalid, so no case changes anything even where it is let through.

/** No project has a resource with this id (ids are 15 digits at most: src/params/id.ts). */
const MISSING = '999999999999999';

/** An id-keyed API route and an id that does not exist: 401 anonymous, 404 for everyone signed in. */
const missingApi: Record<Caller, Outcome> = { ...everyone(404), anonymous: 401 };

/**
 * An id-keyed API route and a resource of the outsider's project: the project is the resource's, so
 * the team project's members are not members of it (403), the site administrators and the outsider
 * (an engineer there) are let through.
 */
const otherProjectsApi: Record<Caller, Outcome> = {
	anonymous: 401,
	viewer: 403,
	engineer: 403,
	analyst: 403,
	certifier: 403,
	admin: 'ok',
	adminViewer: 'ok',
	outsider: 'ok'
};

/** Routes under /p/{key}/... (and the API's project routes) that also name a resource by id. */
const inProject: { route: string; method: string; path: string; body?: Record<string, unknown> }[] = [
	{ route: '/p/[key=projectKey]/requirements/[id=id]', method: 'GET', path: '/p/{key}/requirements/{ID}' },
	...['addLink', 'removeLink', 'setSpec'].map((a) => ({
		route: '/p/[key=projectKey]/requirements/[id=id]',
		method: `ACTION ${a}`,
		path: '/p/{key}/requirements/{ID}',
		body: { parentId: 'none', linkId: 'none', checkType: 'no-such-check' }
	})),
	{
		route: '/p/[key=projectKey]/requirements/[id=id]/edit',
		method: 'GET',
		path: '/p/{key}/requirements/{ID}/edit'
	},
	...['revise', 'preview'].map((a) => ({
		route: '/p/[key=projectKey]/requirements/[id=id]/edit',
		method: `ACTION ${a}`,
		path: '/p/{key}/requirements/{ID}/edit',
		body: { revision: 'none', title: '' }
	})),
	{ route: '/p/[key=projectKey]/models/[id=id]', method: 'GET', path: '/p/{key}/models/{MODEL}' },
	{
		route: '/p/[key=projectKey]/models/[id=id]/publish',
		method: 'GET',
		path: '/p/{key}/models/{MODEL}/publish'
	},
	{
		route: '/p/[key=projectKey]/models/[id=id]/publish',
		method: 'ACTION publish',
		path: '/p/{key}/models/{MODEL}/publish',
		body: { note: '', operatingPoints: '[' }
	},
	{
		route: '/p/[key=projectKey]/models/[id=id]/v/[version=id]',
		method: 'GET',
		path: '/p/{key}/models/{MODEL}/v/1'
	},
	{ route: '/p/[key=projectKey]/evidence/[id=id]', method: 'GET', path: '/p/{key}/evidence/{EVIDENCE}' },
	...['review', 'integrity', 'revise', 'tolerance'].map((a) => ({
		route: '/p/[key=projectKey]/evidence/[id=id]',
		method: `ACTION ${a}`,
		path: '/p/{key}/evidence/{EVIDENCE}',
		body: { decision: 'maybe', revision: 'none', requirementId: 'x' }
	})),
	{
		route: '/p/[key=projectKey]/evidence/[id=id]/inline',
		method: 'GET',
		path: '/p/{key}/evidence/{EVIDENCE}/inline'
	},
	{ route: '/p/[key=projectKey]/baselines/[id=id]', method: 'GET', path: '/p/{key}/baselines/{BASELINE}' },
	{
		route: '/p/[key=projectKey]/baselines/compare',
		method: 'GET',
		path: '/p/{key}/baselines/compare?from={BASELINE}&to=now'
	},
	{
		route: '/api/v1/projects/[key=projectKey]/models/[id=id]/versions',
		method: 'GET',
		path: '/api/v1/projects/{key}/models/{MODEL}/versions'
	},
	{
		route: '/api/v1/projects/[key=projectKey]/models/[id=id]/versions',
		method: 'POST',
		path: '/api/v1/projects/{key}/models/{MODEL}/versions',
		body: { note: '', operatingPoints: [] }
	},
	{
		route: '/api/v1/projects/[key=projectKey]/baselines/[id=id]',
		method: 'GET',
		path: '/api/v1/projects/{key}/baselines/{BASELINE}'
	},
	{
		route: '/api/v1/projects/[key=projectKey]/baselines/[id=id]/trace-matrix.xlsx',
		method: 'GET',
		path: '/api/v1/projects/{key}/baselines/{BASELINE}/trace-matrix.xlsx'
	},
	{
		route: '/api/v1/projects/[key=projectKey]/evidence',
		method: 'GET',
		path: '/api/v1/projects/{key}/evidence?requirement={ID}'
	},
	{
		route: '/p/[key=projectKey]/baselines/[id=id]',
		method: 'ACTION package',
		path: '/p/{key}/baselines/{BASELINE}'
	},
	{
		route: '/api/v1/projects/[key=projectKey]/baselines/[id=id]/package',
		method: 'POST',
		path: '/api/v1/projects/{key}/baselines/{BASELINE}/package',
		body: { bogus: 1 }
	},
	...['', '/report.pdf', '/archive.zip'].map((f) => ({
		route: `/api/v1/projects/[key=projectKey]/packages/[pkg=id]${f}`,
		method: 'GET',
		path: `/api/v1/projects/{key}/packages/{PACKAGE}${f}`
	}))
];

/** Routes that name only a resource id; the project is the resource's. */
const byId: {
	route: string;
	method: string;
	path: string;
	body?: Record<string, unknown>;
	other: boolean;
}[] = [
	{ route: '/api/v1/requirements/[id=id]', method: 'GET', path: '/api/v1/requirements/{ID}', other: true },
	{
		route: '/api/v1/requirements/[id=id]',
		method: 'PATCH',
		path: '/api/v1/requirements/{ID}',
		body: { title: '' },
		other: false
	},
	{
		route: '/api/v1/requirements/[id=id]/specification',
		method: 'PUT',
		path: '/api/v1/requirements/{ID}/specification',
		body: { check: { type: 'no-such-check' } },
		other: false
	},
	{
		route: '/api/v1/requirements/[id=id]/analyses',
		method: 'GET',
		path: '/api/v1/requirements/{ID}/analyses',
		other: true
	},
	{ route: '/api/v1/analyses/[id=id]', method: 'GET', path: '/api/v1/analyses/{RUN}', other: true },
	{ route: '/api/v1/evidence/[id=id]', method: 'GET', path: '/api/v1/evidence/{EVIDENCE}', other: true },
	{
		route: '/api/v1/evidence/[id=id]/download',
		method: 'GET',
		path: '/api/v1/evidence/{EVIDENCE}/download',
		other: false
	},
	{
		route: '/api/v1/evidence/[id=id]/integrity',
		method: 'POST',
		path: '/api/v1/evidence/{EVIDENCE}/integrity?revision=none',
		other: false
	},
	{
		route: '/api/v1/evidence/[id=id]/review',
		method: 'POST',
		path: '/api/v1/evidence/{EVIDENCE}/review',
		body: { decision: 'maybe' },
		other: false
	},
	{
		route: '/api/v1/evidence/[id=id]/revisions',
		method: 'POST',
		path: '/api/v1/evidence/{EVIDENCE}/revisions',
		body: { title: '' },
		other: false
	}
];

const missing = (path: string) => path.replace(/\{(ID|MODEL|EVIDENCE|BASELINE|RUN|PACKAGE)\}/g, MISSING);
const elsewhere = (path: string) =>
	path.replace(/\{(ID|MODEL|EVIDENCE|BASELINE|RUN|PACKAGE)\}/g, (_, k: string) => `{other${k}}`);

const edges: Omit<RouteCase, 'edge'>[] = [
	...inProject.map((c) => ({
		...c,
		path: missing(c.path),
		expect: notInThisProject(c.route.startsWith('/api/') ? 401 : 'signin')
	})),
	...inProject.map((c) => ({
		...c,
		path: elsewhere(c.path),
		expect: notInThisProject(c.route.startsWith('/api/') ? 401 : 'signin')
	})),
	...byId.map((c) => ({
		route: c.route,
		method: c.method,
		body: c.body,
		path: missing(c.path),
		expect: missingApi
	})),
	// Read routes only: through the outsider's project the write bodies would reach its services.
	...byId
		.filter((c) => c.other)
		.map((c) => ({ route: c.route, method: c.method, path: elsewhere(c.path), expect: otherProjectsApi })),
	// A project key that names no project: the sign-in page (401) first, then 404 for everyone.
	{
		route: '/p/[key=projectKey]',
		method: 'GET',
		path: '/p/QZNOSUCH9',
		expect: { ...everyone(404), anonymous: 'signin' }
	},
	{
		route: '/p/[key=projectKey]/requirements/[id=id]',
		method: 'GET',
		path: `/p/QZNOSUCH9/requirements/${MISSING}`,
		expect: { ...everyone(404), anonymous: 'signin' }
	},
	{
		route: '/api/v1/projects/[key=projectKey]',
		method: 'GET',
		path: '/api/v1/projects/QZNOSUCH9',
		expect: missingApi
	}
];

export const cases: RouteCase[] = edges.map((c) => ({ ...c, edge: true }));

/** One of each resource in the outsider's project (the team project's `other`). */
export async function prepare(ctx: PrepareContext): Promise<Record<string, string>> {
	const db = testDb();
	const p = await db('projects').where({ key: ctx.otherProjectKey }).first('id');
	const projectId = Number(p.id);
	const model = await createModel(projectId, { name: 'other project loop' });
	await createModelVersion(model.id);
	const req = await createRequirement(projectId, { title: 'Other project requirement' });
	await createSpec(req.id, { modelId: model.id, check: { type: 'circle', sector: [0, 1] } });
	const run = await createRun(req.id, { engineVersion: ENGINE_VERSION, verdict: 'pass' });
	const ev = await createEvidence(projectId, [req.id]);
	const b = await createBaseline(projectId, 'Other project baseline');
	const pkg = await createPackageRecord(projectId, Number(b.id));
	return {
		otherPACKAGE: String(pkg.id),
		otherID: String(req.id),
		otherMODEL: String(model.id),
		otherEVIDENCE: String(ev.id),
		otherBASELINE: String(b.id),
		otherRUN: String(run.id)
	};
}
