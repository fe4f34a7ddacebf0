import { signedIn } from '../../helpers/http';
import { tinyPng } from '../evidence/fixtures';
import type { PrepareContext } from '../authorization.test';
import { membersOnly, rolesOnly, type RouteCase } from './types';

// Evidence: every member reads and downloads; engineers, analysts and certifiers upload; certifiers
// review. Write bodies are invalid (not multipart, or missing fields), so the table changes nothing.

const uploaders = rolesOnly(['engineer', 'analyst', 'certifier']);
const apiUploaders = rolesOnly(['engineer', 'analyst', 'certifier'], 401);

export const cases: RouteCase[] = [
	{ route: '/p/[key=projectKey]/evidence', method: 'GET', path: '/p/{key}/evidence', expect: membersOnly() },
	{
		route: '/p/[key=projectKey]/evidence',
		method: 'ACTION upload',
		path: '/p/{key}/evidence',
		body: { title: '' },
		expect: uploaders
	},
	{
		route: '/p/[key=projectKey]/evidence/[id=id]',
		method: 'GET',
		path: '/p/{key}/evidence/{evidenceId}',
		expect: membersOnly()
	},
	{
		route: '/p/[key=projectKey]/evidence/[id=id]',
		method: 'ACTION review',
		path: '/p/{key}/evidence/{evidenceId}',
		body: { decision: 'maybe', comment: '', revision: '1' },
		expect: rolesOnly(['certifier'])
	},
	{
		route: '/p/[key=projectKey]/evidence/[id=id]',
		method: 'ACTION integrity',
		path: '/p/{key}/evidence/{evidenceId}',
		body: { revision: 'none' },
		expect: membersOnly()
	},
	{
		route: '/p/[key=projectKey]/evidence/[id=id]',
		method: 'ACTION revise',
		path: '/p/{key}/evidence/{evidenceId}',
		body: {},
		expect: uploaders
	},
	{
		route: '/p/[key=projectKey]/evidence/[id=id]',
		method: 'ACTION tolerance',
		path: '/p/{key}/evidence/{evidenceId}',
		body: { requirementId: 'x', relativeErrorPct: '', phaseDeg: '' },
		expect: rolesOnly(['engineer', 'analyst'])
	},
	{
		route: '/api/v1/projects/[key=projectKey]/evidence',
		method: 'GET',
		path: '/api/v1/projects/{key}/evidence',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/evidence',
		method: 'POST',
		path: '/api/v1/projects/{key}/evidence',
		body: { title: '' },
		expect: apiUploaders
	},
	{
		route: '/api/v1/evidence/[id=id]',
		method: 'GET',
		path: '/api/v1/evidence/{evidenceId}',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/evidence/[id=id]/revisions',
		method: 'POST',
		path: '/api/v1/evidence/{evidenceId}/revisions',
		body: { title: '' },
		expect: apiUploaders
	},
	{
		route: '/api/v1/evidence/[id=id]/review',
		method: 'POST',
		path: '/api/v1/evidence/{evidenceId}/review',
		body: { decision: 'maybe' },
		expect: rolesOnly(['certifier'], 401)
	},
	{
		route: '/api/v1/evidence/[id=id]/integrity',
		method: 'POST',
		path: '/api/v1/evidence/{evidenceId}/integrity?revision=none',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/evidence/[id=id]/download',
		method: 'GET',
		path: '/api/v1/evidence/{evidenceId}/download',
		expect: membersOnly(401)
	},
	{
		route: '/p/[key=projectKey]/evidence/[id=id]/inline',
		method: 'GET',
		path: '/p/{key}/evidence/{evidenceId}/inline',
		expect: membersOnly()
	}
];

/** One piece of evidence (an image) in the team project, uploaded through the API by the engineer. */
export async function prepare(ctx: PrepareContext): Promise<Record<string, string>> {
	const { testDb } = await import('../../factories');
	const db = testDb();
	const [r] = await db('requirements')
		.insert({
			project_id: (await db('projects').where({ key: ctx.projectKey }).first()).id,
			number: 9000 + Math.floor(Math.random() * 1e6),
			identifier: `EVT-${Date.now().toString(36).toUpperCase()}`
		})
		.returning('*');
	const engineer = await signedIn(ctx.users.engineer.email, ctx.users.engineer.password);
	const fd = new FormData();
	fd.set('title', 'Route table image');
	fd.set('kind', 'other');
	fd.set('requirementIds', String(r.id));
	fd.set('file', new Blob([new Uint8Array(tinyPng())], { type: 'image/png' }), 'route-table.png');
	const res = await engineer.request(`/api/v1/projects/${ctx.projectKey}/evidence`, {
		method: 'POST',
		body: fd
	});
	if (res.status !== 201)
		throw new Error(`route-table evidence upload failed: ${res.status} ${await res.text()}`);
	const rec = await res.json();
	return { evidenceId: String(rec.id) };
}
