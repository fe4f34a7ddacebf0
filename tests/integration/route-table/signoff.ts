import { createRequirement, testDb } from '../../factories';
import type { PrepareContext } from '../authorization.test';
import { adminOnly, membersOnly, rolesOnly, type RouteCase } from './types';

// Sign-off: review actions on a requirement, findings (pages and API), the project's independence
// setting. Bodies are invalid (no password, no version), so the table changes nothing: a signing
// action refuses a missing password with 400 before anything is looked at.

const workers = rolesOnly(['engineer', 'analyst', 'certifier']);

export const cases: RouteCase[] = [
	{
		route: '/p/[key=projectKey]/requirements/[id=id]',
		method: 'ACTION requestReview',
		path: '/p/{key}/requirements/{rqPageId}',
		body: { revision: 'x' },
		expect: rolesOnly(['engineer'])
	},
	{
		route: '/p/[key=projectKey]/requirements/[id=id]',
		method: 'ACTION comment',
		path: '/p/{key}/requirements/{rqPageId}',
		body: { revision: 'x', body: '' },
		expect: workers
	},
	{
		route: '/p/[key=projectKey]/requirements/[id=id]',
		method: 'ACTION decide',
		path: '/p/{key}/requirements/{rqPageId}',
		body: { revision: 'x', decision: 'approve' },
		expect: workers
	},
	{ route: '/p/[key=projectKey]/findings', method: 'GET', path: '/p/{key}/findings', expect: membersOnly() },
	{
		route: '/p/[key=projectKey]/findings',
		method: 'ACTION raise',
		path: '/p/{key}/findings',
		body: { requirementId: '' },
		expect: workers
	},
	{
		route: '/p/[key=projectKey]/findings/[id=id]',
		method: 'GET',
		path: '/p/{key}/findings/{findingId}',
		expect: membersOnly()
	},
	{
		route: '/p/[key=projectKey]/findings/[id=id]',
		method: 'ACTION work',
		path: '/p/{key}/findings/{findingId}',
		body: { version: 'x' },
		expect: workers
	},
	{
		route: '/p/[key=projectKey]/findings/[id=id]',
		method: 'ACTION decide',
		path: '/p/{key}/findings/{findingId}',
		body: { version: 'x', state: 'closed' },
		expect: rolesOnly(['certifier'])
	},
	{
		route: '/api/v1/projects/[key=projectKey]/findings',
		method: 'GET',
		path: '/api/v1/projects/{key}/findings',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/findings/[id=id]',
		method: 'GET',
		path: '/api/v1/findings/{findingId}',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/findings/[id=id]',
		method: 'PATCH',
		path: '/api/v1/findings/{findingId}',
		body: { version: 'x' },
		expect: rolesOnly(['engineer', 'analyst', 'certifier'], 401)
	},
	{
		route: '/admin/projects/[key=projectKey]',
		method: 'ACTION independence',
		path: '/admin/projects/{key}',
		body: { rule: 'x', approvals: '9' },
		expect: adminOnly()
	}
];

/** A finding of the team project (opened by hand on a requirement of its own). */
export async function prepare(ctx: PrepareContext): Promise<Record<string, string>> {
	const p = await testDb()('projects').where({ key: ctx.projectKey }).first('id');
	const r = await createRequirement(Number(p.id), { title: 'Route table finding requirement' });
	const [f] = await testDb()('findings')
		.insert({
			project_id: p.id,
			number: 900,
			requirement_id: r.id,
			cause: 'manual',
			assurance_level: 'B',
			title: 'Route table finding',
			opened_by_label: 'route table'
		})
		.returning('id');
	return { findingId: String(f.id) };
}
