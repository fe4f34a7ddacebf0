import { testDb } from '../../factories';
import { membersOnly, rolesOnly, type RouteCase } from './types';
import type { PrepareContext } from '../authorization.test';

// Requirements: every member reads; engineers (and admins) write requirements, links and
// specifications; outsiders are refused. Write bodies are invalid (400) so the table changes nothing.

const writers = rolesOnly(['engineer']);
const apiWriters = rolesOnly(['engineer'], 401);

export const cases: RouteCase[] = [
	{
		route: '/p/[key=projectKey]/requirements',
		method: 'GET',
		path: '/p/{key}/requirements',
		expect: membersOnly()
	},
	{
		route: '/p/[key=projectKey]/requirements/new',
		method: 'GET',
		path: '/p/{key}/requirements/new',
		expect: writers
	},
	{
		route: '/p/[key=projectKey]/requirements/new',
		method: 'ACTION create',
		path: '/p/{key}/requirements/new',
		body: { title: '', statement: '' },
		expect: writers
	},
	{
		route: '/p/[key=projectKey]/requirements/new',
		method: 'ACTION preview',
		path: '/p/{key}/requirements/new',
		body: { statement: 'The loop shall be robust.' },
		expect: writers
	},
	{
		route: '/p/[key=projectKey]/requirements/[id=id]',
		method: 'GET',
		path: '/p/{key}/requirements/{rqPageId}',
		expect: membersOnly()
	},
	{
		route: '/p/[key=projectKey]/requirements/[id=id]',
		method: 'ACTION addLink',
		path: '/p/{key}/requirements/{rqPageId}',
		body: { parentId: 'none' },
		expect: writers
	},
	{
		route: '/p/[key=projectKey]/requirements/[id=id]',
		method: 'ACTION removeLink',
		path: '/p/{key}/requirements/{rqPageId}',
		body: { linkId: 'none' },
		expect: writers
	},
	{
		route: '/p/[key=projectKey]/requirements/[id=id]',
		method: 'ACTION setSpec',
		path: '/p/{key}/requirements/{rqPageId}',
		body: { checkType: 'no-such-check' },
		expect: writers
	},
	{
		route: '/p/[key=projectKey]/requirements/[id=id]/edit',
		method: 'GET',
		path: '/p/{key}/requirements/{rqPageId}/edit',
		expect: writers
	},
	{
		route: '/p/[key=projectKey]/requirements/[id=id]/edit',
		method: 'ACTION revise',
		path: '/p/{key}/requirements/{rqPageId}/edit',
		body: { revision: 'none', title: '' },
		expect: writers
	},
	{
		route: '/p/[key=projectKey]/requirements/[id=id]/edit',
		method: 'ACTION preview',
		path: '/p/{key}/requirements/{rqPageId}/edit',
		body: { statement: 'It should be fast.' },
		expect: writers
	},
	{
		route: '/api/v1/projects/[key=projectKey]/requirements',
		method: 'GET',
		path: '/api/v1/projects/{key}/requirements',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/projects/[key=projectKey]/requirements',
		method: 'POST',
		path: '/api/v1/projects/{key}/requirements',
		body: { title: '' },
		expect: apiWriters
	},
	{
		route: '/api/v1/requirements/[id=id]',
		method: 'GET',
		path: '/api/v1/requirements/{rqPageId}',
		expect: membersOnly(401)
	},
	{
		route: '/api/v1/requirements/[id=id]',
		method: 'PATCH',
		path: '/api/v1/requirements/{rqPageId}',
		body: { title: '' },
		expect: apiWriters
	},
	{
		route: '/api/v1/requirements/[id=id]/specification',
		method: 'PUT',
		path: '/api/v1/requirements/{rqPageId}/specification',
		body: { check: { type: 'no-such-check' } },
		expect: apiWriters
	}
];

/** One requirement in the team project, written as the service would (identifier from the counter). */
export async function prepare(ctx: PrepareContext): Promise<Record<string, string>> {
	const db = testDb();
	const id = await db.transaction(async (trx) => {
		const p = await trx('projects')
			.where({ key: ctx.projectKey })
			.forUpdate()
			.first('id', 'next_requirement_number');
		const n = Number(p.next_requirement_number);
		await trx('projects')
			.where({ id: p.id })
			.update({ next_requirement_number: n + 1 });
		const [r] = await trx('requirements')
			.insert({ project_id: p.id, number: n, identifier: `${ctx.projectKey}-${String(n).padStart(3, '0')}` })
			.returning('id');
		await trx('requirement_revisions').insert({
			requirement_id: r.id,
			revision: 1,
			title: 'Route table requirement',
			statement: 'The loop shall remain absolutely stable for every gain in [0.5, 1.8].',
			level: 'loop',
			assurance_level: 'C',
			methods: ['analysis'],
			owner_id: ctx.users.engineer.id,
			status: 'draft',
			content_hash: '0'.repeat(64)
		});
		return Number(r.id);
	});
	return { rqPageId: String(id) };
}
