import { createHash, randomBytes } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTestDb, createTeam, testDb, unique } from '../factories';
import { Client, signedIn } from '../helpers/http';

// Requirements through the API and the forms, against the real PostgreSQL and the built app.
// Expected behaviour comes from DOMAIN.md §6 (never-reused identifiers, every change a revision,
// derived-from links without cycles) and issue 4.

afterAll(closeTestDb);

let team: Awaited<ReturnType<typeof createTeam>>;
let eng: Client;
let viewer: Client;
const api = (path: string) => `/api/v1${path}`;

beforeAll(async () => {
	team = await createTeam();
	eng = await signedIn(team.users.engineer.email, team.users.engineer.password);
	viewer = await signedIn(team.users.viewer.email, team.users.viewer.password);
});

const body = (over: Record<string, unknown> = {}) => ({
	title: 'Elevon loop absolute stability',
	statement:
		'The elevon loop shall remain absolutely stable for every actuator gain in [0.5, 1.8] times nominal.',
	rationale: 'Actuator gain varies from -50 % to +80 % with temperature and wear.',
	level: 'loop',
	assuranceLevel: 'B',
	methods: ['analysis', 'test'],
	...over
});

async function create(over: Record<string, unknown> = {}, client = eng, key = team.project.key) {
	const res = await client.json(api(`/projects/${key}/requirements`), 'POST', body(over));
	const json = await res.json();
	return { status: res.status, json };
}

async function counts() {
	const db = testDb();
	const n = async (table: string) => Number((await db(table).count<{ c: number }[]>('* as c'))[0].c);
	return {
		requirements: await n('requirements'),
		revisions: await n('requirement_revisions'),
		specs: await n('stability_specs'),
		links: await n('requirement_links'),
		audit: await n('audit_events'),
		counter: Number(
			(await db('projects').where({ id: team.project.id }).first('next_requirement_number'))
				.next_requirement_number
		)
	};
}

/** A loop model with one version (direct insert; the models area has its own tests). */
async function modelWithVersion(projectId: number) {
	const db = testDb();
	const [m] = await db('models')
		.insert({ project_id: projectId, name: unique('elevon-actuator-'), latest_version: 1 })
		.returning('*');
	const content = {
		operatingPoints: [{ label: 'hover, 20 C', model: { kind: 'tf', num: [1], den: [0.05, 1] } }]
	};
	const [v] = await db('model_versions')
		.insert({
			model_id: m.id,
			version: 1,
			content: JSON.stringify(content),
			content_hash: createHash('sha256').update(JSON.stringify(content)).digest('hex')
		})
		.returning('*');
	return { modelId: Number(m.id), versionId: Number(v.id) };
}

describe('identifiers', () => {
	it('are <KEY>-<nnn> from the project counter, consecutive, and never reused', async () => {
		const before = await counts();
		const a = await create();
		const b = await create({ title: 'Second' });
		expect(a.status).toBe(201);
		expect(b.status).toBe(201);
		const na = before.counter;
		expect(a.json.requirement.identifier).toBe(`${team.project.key}-${String(na).padStart(3, '0')}`);
		expect(b.json.requirement.identifier).toBe(`${team.project.key}-${String(na + 1).padStart(3, '0')}`);
		expect(a.json.requirement.revision).toBe(1);
		// Concurrent creations: distinct, consecutive numbers (the counter row is locked).
		const many = await Promise.all([1, 2, 3, 4, 5].map((i) => create({ title: `Parallel ${i}` })));
		const ids = many.map((m) => m.json.requirement.identifier).sort();
		expect(new Set(ids).size).toBe(5);
		const numbers = ids.map((i: string) => Number(i.split('-').pop())).sort((x: number, y: number) => x - y);
		expect(numbers).toEqual([na + 2, na + 3, na + 4, na + 5, na + 6]);
		// The counter only grows, and the database refuses a second row with a used identifier or a
		// deletion of a revision.
		expect((await counts()).counter).toBe(na + 7);
		await expect(
			testDb()('requirements').insert({
				project_id: team.project.id,
				number: na,
				identifier: a.json.requirement.identifier
			})
		).rejects.toThrow(/unique|duplicate/i);
		await expect(
			testDb()('requirement_revisions').where({ requirement_id: a.json.requirement.id }).delete()
		).rejects.toThrow(/immutable/);
	});

	it('a refused creation takes no number', async () => {
		const before = await counts();
		// Approval is a signed act of the review workflow, never a field written with a revision.
		const r = await create({
			statement: 'The loop shall remain stable for gains up to TBD.',
			status: 'approved'
		});
		expect(r.status).toBe(400);
		const ok = await create();
		expect(ok.json.requirement.identifier).toBe(
			`${team.project.key}-${String(before.counter).padStart(3, '0')}`
		);
	});
});

describe('revisions', () => {
	it('every edit is a new immutable revision; the database refuses to change an old one', async () => {
		const { json } = await create();
		const id = json.requirement.id;
		const res = await eng.json(api(`/requirements/${id}`), 'PATCH', {
			revision: 1,
			statement:
				'The elevon loop shall remain absolutely stable for every actuator gain in [0.4, 1.8] times nominal.',
			changeNote: 'wider lower bound after rig data'
		});
		expect(res.status).toBe(200);
		const after = await res.json();
		expect(after.requirement.revision).toBe(2);
		expect(after.requirement.statement).toMatch(/\[0\.4, 1\.8\]/);
		const rows = await testDb()('requirement_revisions').where({ requirement_id: id }).orderBy('revision');
		expect(rows.map((r) => r.revision)).toEqual([1, 2]);
		expect(rows[0].statement).toMatch(/\[0\.5, 1\.8\]/);
		expect(rows[0].content_hash).not.toBe(rows[1].content_hash);
		expect(rows[1].change_note).toBe('wider lower bound after rig data');
		await expect(
			testDb()('requirement_revisions').where({ id: rows[0].id }).update({ statement: 'tampered' })
		).rejects.toThrow(/immutable/);
		// An edit that changes nothing makes no revision.
		const same = await eng.json(api(`/requirements/${id}`), 'PATCH', {
			revision: 2,
			title: after.requirement.title
		});
		expect((await same.json()).unchanged).toBe(true);
		expect(await testDb()('requirement_revisions').where({ requirement_id: id })).toHaveLength(2);
		// The audit trail has the creation and the revision, with what changed.
		const events = await testDb()('audit_events')
			.where({ subject_type: 'requirement', subject_id: String(id) })
			.orderBy('seq');
		expect(events.map((e) => e.action)).toEqual(['requirement.create', 'requirement.revise']);
		expect(events[1].after.statement).toMatch(/\[0\.4, 1\.8\]/);
		expect(events[1].before.statement).toMatch(/\[0\.5, 1\.8\]/);
	});

	it('API PATCH on a stale revision answers 409 with what changed since, and saves nothing', async () => {
		const { json } = await create();
		const id = json.requirement.id;
		const first = await eng.json(api(`/requirements/${id}`), 'PATCH', {
			revision: 1,
			title: 'Theirs',
			status: 'retired'
		});
		expect(first.status).toBe(200);
		const before = await counts();
		const stale = await eng.json(api(`/requirements/${id}`), 'PATCH', { revision: 1, title: 'Mine' });
		expect(stale.status).toBe(409);
		const err = (await stale.json()).error;
		expect(err.currentRevision).toBe(2);
		expect(err.changed.title).toEqual({ yours: 'Mine', theirs: 'Theirs' });
		expect(err.changed.status).toEqual({ yours: 'draft', theirs: 'retired' });
		expect(err.changed.statement).toBeUndefined();
		expect(await counts()).toEqual(before);
		// Without a revision there is no update at all.
		const missing = await eng.json(api(`/requirements/${id}`), 'PATCH', { title: 'No revision' });
		expect(missing.status).toBe(400);
		expect((await missing.json()).error.fields.revision).toBeTruthy();
	});

	it('the edit form on a stale revision fails with 409 and shows the conflict', async () => {
		const { json } = await create();
		const id = json.requirement.id;
		await eng.json(api(`/requirements/${id}`), 'PATCH', {
			revision: 1,
			statement: json.requirement.statement.replace('1.8', '2.0')
		});
		const path = `/p/${team.project.key}/requirements/${id}/edit?/revise`;
		const fields = {
			revision: '1',
			title: 'Edited from an old page',
			statement: json.requirement.statement,
			rationale: '',
			level: 'loop',
			assuranceLevel: 'B',
			methods: 'analysis',
			ownerId: String(team.users.engineer.id),
			status: 'draft',
			changeNote: ''
		};
		const r = await eng.action(path, fields);
		expect(r.type).toBe('failure');
		expect(r.status).toBe(409);
		const conflict = r.data?.conflict as {
			currentRevision: number;
			changed: Record<string, { theirs: string }>;
		};
		expect(conflict.currentRevision).toBe(2);
		expect(conflict.changed.statement.theirs).toMatch(/2\.0/);
		expect((await testDb()('requirements').where({ id }).first()).current_revision).toBe(2);
		// Without JavaScript the page itself answers 409 and names the conflict.
		const plain = await eng.postForm(path, fields);
		expect(plain.status).toBe(409);
		expect(await plain.text()).toMatch(/Someone saved revision 2/);
		// Saving on top of the current revision works.
		const ok = await eng.action(path, { ...fields, revision: '2' });
		expect(ok.type).toBe('redirect');
		expect((await testDb()('requirements').where({ id }).first()).current_revision).toBe(3);
	});

	it('the status field no longer approves: approval goes through the signed review workflow', async () => {
		const { json } = await create({
			statement: 'The loop shall remain absolutely stable for every gain in [0.5, TBD].'
		});
		const id = json.requirement.id;
		// The API carries the same hints the form shows; the placeholder is the blocker.
		expect(json.requirement.quality).toContainEqual(
			expect.objectContaining({ rule: 'placeholder', severity: 'blocker' })
		);
		for (const status of ['approved', 'in-review']) {
			const res = await eng.json(api(`/requirements/${id}`), 'PATCH', { revision: 1, status });
			expect(res.status).toBe(400);
			const err = (await res.json()).error;
			expect(err.fields.status).toMatch(/review workflow/);
		}
		expect(await testDb()('requirements').where({ id }).first()).toMatchObject({
			current_revision: 1,
			review_state: 'draft'
		});
		// (Approval refused while the placeholder is there: tests/integration/signoff.test.ts.)
	});
});

describe('derived-from links', () => {
	it('refuses a link that closes a cycle, naming the cycle', async () => {
		const a = (await create({ title: 'System', level: 'system' })).json.requirement;
		const b = (await create({ title: 'Subsystem', level: 'subsystem' })).json.requirement;
		const c = (await create({ title: 'Loop' })).json.requirement;
		const page = (r: { id: number }) => `/p/${team.project.key}/requirements/${r.id}?/addLink`;
		expect((await eng.action(page(b), { parentId: String(a.id) })).type).toBe('success');
		expect((await eng.action(page(c), { parentId: String(b.id) })).type).toBe('success');
		const before = await counts();
		// A derived from C would close A -> C -> B -> A.
		const refused = await eng.action(page(a), { parentId: String(c.id) });
		expect(refused.status).toBe(409);
		const errors = refused.data?.errors as Record<string, string>;
		expect(errors._).toContain(`${a.identifier} → ${c.identifier} → ${b.identifier} → ${a.identifier}`);
		expect(errors.parentId).toMatch(/cycle/);
		// The two-element case: B derived from C where C is derived from B.
		const two = await eng.action(page(b), { parentId: String(c.id) });
		expect((two.data?.errors as Record<string, string>)._).toContain(
			`${b.identifier} → ${c.identifier} → ${b.identifier}`
		);
		expect(await counts()).toEqual(before);
		// A duplicate link and a self link are refused too.
		expect((await eng.action(page(c), { parentId: String(b.id) })).status).toBe(409);
		expect((await eng.action(page(c), { parentId: String(c.id) })).status).toBe(400);
	});

	it('records both revisions on the link; removing keeps the row (removed_at) and allows the reverse link', async () => {
		const p = (await create({ title: 'Parent', level: 'system' })).json.requirement;
		const ch = (await create({ title: 'Child' })).json.requirement;
		await eng.json(api(`/requirements/${p.id}`), 'PATCH', { revision: 1, title: 'Parent, revised' });
		const page = (r: { id: number }) => `/p/${team.project.key}/requirements/${r.id}`;
		expect((await eng.action(`${page(ch)}?/addLink`, { parentId: String(p.id) })).type).toBe('success');
		const link = await testDb()('requirement_links').where({ child_id: ch.id, parent_id: p.id }).first();
		expect([link.child_revision, link.parent_revision]).toEqual([1, 2]);
		const detail = await (await eng.get(api(`/requirements/${ch.id}`))).json();
		expect(detail.requirement.parents.map((x: { identifier: string }) => x.identifier)).toEqual([
			p.identifier
		]);
		const parentDetail = await (await eng.get(api(`/requirements/${p.id}`))).json();
		expect(parentDetail.requirement.children.map((x: { identifier: string }) => x.identifier)).toEqual([
			ch.identifier
		]);
		expect((await eng.action(`${page(ch)}?/removeLink`, { linkId: String(link.id) })).type).toBe('success');
		const removed = await testDb()('requirement_links').where({ id: link.id }).first();
		expect(removed.removed_at).not.toBeNull();
		expect(Number(removed.removed_by)).toBe(Number(team.users.engineer.id));
		// With the link gone, the reverse direction no longer closes a cycle.
		expect((await eng.action(`${page(p)}?/addLink`, { parentId: String(ch.id) })).type).toBe('success');
		const actions = (
			await testDb()('audit_events').where({ subject_type: 'requirement', subject_id: String(ch.id) })
		).map((e) => e.action);
		expect(actions).toEqual(expect.arrayContaining(['requirement.link', 'requirement.unlink']));
	});
});

describe('stability specification', () => {
	it('each edit is a new immutable row that becomes current, and queues the analysis', async () => {
		const r = (await create()).json.requirement;
		const { modelId, versionId } = await modelWithVersion(team.project.id);
		const put = (b: unknown) => eng.json(api(`/requirements/${r.id}/specification`), 'PUT', b);
		const first = await put({
			check: { type: 'circle', sector: [0.5, 1.8] },
			modelId,
			template: 'gain-50-80'
		});
		expect(first.status).toBe(201);
		const s1 = (await first.json()).specification;
		const read = (await (await viewer.get(api(`/requirements/${r.id}`))).json()).requirement;
		expect(read.consistency.status).toBe('consistent');
		expect(read.specification.id).toBe(s1.id);
		expect(s1).toMatchObject({
			version: 1,
			modelId,
			modelVersionId: null,
			template: 'gain-50-80',
			requiredMargin: null
		});
		const runs = await testDb()('analysis_runs').where({ requirement_id: r.id, spec_id: s1.id });
		expect(runs).toHaveLength(1);
		expect(runs[0]).toMatchObject({ trigger: 'spec-edit', requirement_revision: 1 });
		expect(Number(runs[0].model_version_id)).toBe(versionId);

		const second = await put({
			check: { type: 'circle', sector: [0.5, 1.8] },
			requiredMargin: 0.2,
			operatingPoints: ['hover, 20 C'],
			modelId,
			modelVersionId: versionId,
			baseVersion: 1
		});
		expect(second.status).toBe(201);
		const s2 = (await second.json()).specification;
		expect(s2.version).toBe(2);
		const rows = await testDb()('stability_specs').where({ requirement_id: r.id }).orderBy('version');
		expect(rows.map((x) => x.version)).toEqual([1, 2]);
		expect(rows[0].required_margin).toBeNull();
		expect(rows[1]).toMatchObject({ required_margin: 0.2, operating_points: ['hover, 20 C'] });
		expect(Number(rows[1].model_version_id)).toBe(versionId);
		expect((await testDb()('requirements').where({ id: r.id }).first()).current_spec_id).toBe(rows[1].id);
		await expect(
			testDb()('stability_specs').where({ id: rows[0].id }).update({ template: 'x' })
		).rejects.toThrow(/immutable/);

		// The same content again changes nothing; a stale base version is a conflict.
		const again = await put({
			check: { type: 'circle', sector: [0.5, 1.8] },
			requiredMargin: 0.2,
			operatingPoints: ['hover, 20 C'],
			modelId,
			modelVersionId: versionId
		});
		expect(again.status).toBe(200);
		expect((await again.json()).unchanged).toBe(true);
		const stale = await put({ check: { type: 'positive-real' }, modelId, baseVersion: 1 });
		expect(stale.status).toBe(409);
		expect(await testDb()('stability_specs').where({ requirement_id: r.id })).toHaveLength(2);
		const events = (
			await testDb()('audit_events').where({ subject_type: 'requirement', subject_id: String(r.id) })
		).map((e) => e.action);
		expect(events.filter((e) => e === 'requirement.specification')).toHaveLength(2);
		// The list carries the analysis state (pending or already decided by the worker).
		const list = await (
			await viewer.get(api(`/projects/${team.project.key}/requirements?q=${r.identifier}`))
		).json();
		expect(list.requirements).toHaveLength(1);
		expect(['pending', 'verified', 'not-proved', 'not-applicable', 'inconclusive', 'error']).toContain(
			list.requirements[0].analysis.state
		);
		// ... and the one verification state beside it.
		expect(list.requirements[0].verification.state).toEqual(expect.any(String));
	});

	it('the specification form validates in place and saves through the same rules', async () => {
		const r = (await create()).json.requirement;
		const { modelId } = await modelWithVersion(team.project.id);
		const path = `/p/${team.project.key}/requirements/${r.id}?/setSpec`;
		const before = await counts();
		const bad = await eng.action(path, { checkType: 'circle', k1: '2', k2: '1', modelId: String(modelId) });
		expect(bad.status).toBe(400);
		expect(Object.keys(bad.data?.errors as object)).toContain('k2');
		const noModel = await eng.action(path, {
			checkType: 'margins',
			minGainMarginDb: '6',
			minPhaseMarginDeg: '45'
		});
		expect((noModel.data?.errors as Record<string, string>).modelId).toBeTruthy();
		const wrongPoint = await eng.action(path, {
			checkType: 'popov',
			k1: '0',
			k2: '1',
			modelId: String(modelId),
			modelVersionId: String((await testDb()('model_versions').where({ model_id: modelId }).first()).id),
			operatingPoints: 'cruise'
		});
		expect((wrongPoint.data?.errors as Record<string, string>).operatingPoints).toMatch(/cruise/);
		expect(await counts()).toEqual(before);
		const ok = await eng.action(path, {
			checkType: 'circle',
			k1: '0.5',
			k2: '1.8',
			requiredMarginPercent: '20',
			modelId: String(modelId),
			modelVersionId: 'latest',
			template: 'gain-50-80'
		});
		expect(ok.type).toBe('success');
		const spec = await testDb()('stability_specs').where({ requirement_id: r.id }).first();
		expect(spec.check).toEqual({ type: 'circle', sector: [0.5, 1.8] });
		expect(spec.required_margin).toBeCloseTo(0.2, 12);
		// The requirement page shows the statement and the specification together, consistent.
		const html = await (await eng.get(`/p/${team.project.key}/requirements/${r.id}`)).text();
		expect(html).toContain('circle criterion, sector [0.5, 1.8]');
		expect(html).toMatch(/data-status="(consistent|unstated)"/);
	});
});

describe('bad input', () => {
	it('bad JSON and bad fields give 400 naming each field and change nothing', async () => {
		const r = (await create()).json.requirement;
		const before = await counts();
		const raw = (path: string, method: string, text: string) =>
			eng.request(api(path), { method, headers: { 'content-type': 'application/json' }, body: text });
		for (const [path, method] of [
			[`/projects/${team.project.key}/requirements`, 'POST'],
			[`/requirements/${r.id}`, 'PATCH'],
			[`/requirements/${r.id}/specification`, 'PUT']
		]) {
			const res = await raw(path, method, '{"title": ');
			expect(res.status, `${method} ${path}`).toBe(400);
			expect((await res.json()).error.message).toMatch(/not valid JSON/);
		}
		const fields = await create({
			title: '',
			level: 'galaxy',
			assuranceLevel: 'F',
			methods: [],
			ownerId: 'x',
			extra: 1
		});
		expect(fields.status).toBe(400);
		// strict(): an unknown key is named; the field errors name each bad field.
		const f = fields.json.error.fields;
		expect(Object.keys(f)).toEqual(
			expect.arrayContaining(['title', 'level', 'assuranceLevel', 'methods', 'ownerId'])
		);
		const outsiderOwner = await create({ ownerId: Number(team.users.outsider.id) });
		expect(outsiderOwner.status).toBe(400);
		expect(outsiderOwner.json.error.fields.ownerId).toBeTruthy();
		const patch = await eng.json(api(`/requirements/${r.id}`), 'PATCH', {
			revision: 1,
			methods: ['telepathy'],
			status: 'done'
		});
		expect(patch.status).toBe(400);
		expect(Object.keys((await patch.json()).error.fields)).toEqual(
			expect.arrayContaining(['methods.0', 'status'])
		);
		const spec = await eng.json(api(`/requirements/${r.id}/specification`), 'PUT', {
			check: { type: 'circle', sector: [2, 1] },
			modelId: 'none',
			requiredMargin: -1
		});
		expect(spec.status).toBe(400);
		expect(Object.keys((await spec.json()).error.fields)).toEqual(
			expect.arrayContaining(['check.sector', 'modelId', 'requiredMargin'])
		);
		const maxSector = await eng.json(api(`/requirements/${r.id}/specification`), 'PUT', {
			check: { type: 'max-sector', lower: 0 },
			modelId: 1
		});
		expect(maxSector.status).toBe(400);
		const badFilter = await eng.get(
			api(`/projects/${team.project.key}/requirements?status=done&level=galaxy&color=red`)
		);
		expect(badFilter.status).toBe(400);
		expect(Object.keys((await badFilter.json()).error.fields)).toEqual(
			expect.arrayContaining(['status', 'level', '_'])
		);
		const wrongType = await eng.request(api(`/projects/${team.project.key}/requirements`), {
			method: 'POST',
			headers: { 'content-type': 'text/plain' },
			body: 'hello'
		});
		expect(wrongType.status).toBe(415);
		// The create form: field errors in place, nothing stored.
		const form = await eng.action(`/p/${team.project.key}/requirements/new?/create`, {
			title: '',
			statement: '',
			level: 'x'
		});
		expect(form.status).toBe(400);
		expect(Object.keys(form.data?.errors as object)).toEqual(
			expect.arrayContaining(['title', 'statement', 'level', 'assuranceLevel', 'methods'])
		);
		expect(await counts()).toEqual(before);
	});

	it('a requirement of another project is a 404 on its pages; a viewer cannot write', async () => {
		const otherReq = await create(
			{ ownerId: Number(team.users.outsider.id) },
			await signedIn(team.users.admin.email, team.users.admin.password),
			team.other.key
		);
		expect(otherReq.status).toBe(201);
		expect(
			(await eng.get(`/p/${team.project.key}/requirements/${otherReq.json.requirement.id}`)).status
		).toBe(404);
		expect((await eng.get(api(`/requirements/${otherReq.json.requirement.id}`))).status).toBe(403);
		expect((await eng.get(api('/requirements/999999999'))).status).toBe(404);
		expect((await new Client().get(api('/requirements/999999999'))).status).toBe(401);
		const denied = await create({}, viewer);
		expect(denied.status).toBe(403);
	});
});

describe('API tokens', () => {
	async function token(userId: number, projectId: number, role: string) {
		const t = randomBytes(24).toString('base64url');
		const [row] = await testDb()('api_tokens')
			.insert({
				user_id: userId,
				project_id: projectId,
				role,
				label: 'pipeline',
				token_hash: createHash('sha256').update(t, 'utf8').digest('hex')
			})
			.returning('id');
		return { header: { authorization: `Bearer ${t}` }, id: Number(row.id) };
	}

	it('a token acts with its own role in its own project, and the audit names the token', async () => {
		const c = new Client();
		const read = await token(Number(team.users.engineer.id), team.project.id, 'viewer');
		const write = await token(Number(team.users.engineer.id), team.project.id, 'engineer');
		const list = await c.get(api(`/projects/${team.project.key}/requirements`), read.header);
		expect(list.status).toBe(200);
		expect(
			(await c.json(api(`/projects/${team.project.key}/requirements`), 'POST', body(), read.header)).status
		).toBe(403);
		const created = await c.json(
			api(`/projects/${team.project.key}/requirements`),
			'POST',
			body(),
			write.header
		);
		expect(created.status).toBe(201);
		const id = (await created.json()).requirement.id;
		const ev = await testDb()('audit_events')
			.where({ subject_type: 'requirement', subject_id: String(id), action: 'requirement.create' })
			.first();
		expect(ev.actor_label).toBe(`token ${write.id} of ${team.users.engineer.email}`);
		expect(Number(ev.actor_token_id)).toBe(write.id);
		// Scoped to one project: the other project's list is refused.
		expect((await c.get(api(`/projects/${team.other.key}/requirements`), write.header)).status).toBe(403);
	});
});

describe('pages', () => {
	it('the list filters by status, level, owner and text with GET parameters', async () => {
		const key = team.project.key;
		const sys = (await create({ title: unique('Filterable system '), level: 'system' })).json.requirement;
		const html = await (
			await viewer.get(`/p/${key}/requirements?level=system&q=${encodeURIComponent(sys.title)}`)
		).text();
		expect(html).toContain(sys.identifier);
		const none = await (
			await viewer.get(`/p/${key}/requirements?level=loop&q=${encodeURIComponent(sys.title)}`)
		).text();
		expect(none).not.toContain(sys.identifier);
		const api1 = await (
			await viewer.get(
				api(`/projects/${key}/requirements?status=draft&owner=${team.users.engineer.id}&level=system`)
			)
		).json();
		expect(api1.requirements.map((x: { id: number }) => x.id)).toContain(sys.id);
		expect(
			api1.requirements.every(
				(x: { level: string; status: string }) => x.level === 'system' && x.status === 'draft'
			)
		).toBe(true);
		expect(api1.requirements[0].analysis.state).toBeTruthy();
	});

	it('an empty project says what to do first', async () => {
		const admin = await signedIn(team.users.admin.email, team.users.admin.password);
		const p = (
			await testDb()('projects')
				.insert({
					key:
						'E' +
						Math.random()
							.toString(36)
							.slice(2, 7)
							.toUpperCase()
							.replace(/[^A-Z0-9]/g, 'Q'),
					name: 'Empty',
					description: ''
				})
				.returning('*')
		)[0];
		const html = await (await admin.get(`/p/${p.key}/requirements`)).text();
		expect(html).toContain('No requirement yet');
		expect(html).toContain('Write the first requirement');
	});

	it('the requirement page shows the revision diff and the audit history', async () => {
		const r = (await create()).json.requirement;
		await eng.json(api(`/requirements/${r.id}`), 'PATCH', {
			revision: 1,
			statement: r.statement.replace('[0.5, 1.8]', '[0.4, 2.0]')
		});
		const html = await (await viewer.get(`/p/${team.project.key}/requirements/${r.id}`)).text();
		const diff = html.match(/data-testid="diff-r2"[\s\S]{0,3000}/)?.[0] ?? '';
		expect(diff).toMatch(/\[removed: ?<\/span>(<!--[^>]*-->)*0\.5/);
		expect(diff).toMatch(/\[added: ?<\/span>(<!--[^>]*-->)*0\.4/);
		expect(html).toContain('data-testid="diff-r2"');
		expect(html).toContain('revised');
		expect(html).toContain('Results support engineering judgement');
	});
});
