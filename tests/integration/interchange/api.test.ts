import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
	addMember,
	closeTestDb,
	createModel,
	createModelVersion,
	createProject,
	createTeam,
	createRequirement as createFactoryRequirement,
	linkRequirements,
	testDb
} from '../../factories';
import { Client, signedIn } from '../../helpers/http';
import { withoutCreationTime, xmllint } from './reqif-helpers';

// Issue 14 through the API: ReqIF export of a project and of a baseline as frozen; imports (ReqIF,
// CSV, XLSX) with their preview, problems by object or row and column, confirm in one transaction,
// 409 / 422, re-import as a no-op, and bad input refused with JSON naming where, nothing stored.

afterAll(closeTestDb);

let team: Awaited<ReturnType<typeof createTeam>>;
let eng: Client;
let viewer: Client;
const api = (path: string) => `/api/v1${path}`;

beforeAll(async () => {
	team = await createTeam();
	eng = await signedIn(team.users.engineer.email, team.users.engineer.password);
	viewer = await signedIn(team.users.viewer.email, team.users.viewer.password);
	const m = await createModel(team.project.id, { name: 'Pitch plant' });
	await createModelVersion(m.id, {
		operatingPoints: [{ label: 'hover', model: { kind: 'tf', num: [4], den: [1, 3, 2] } }]
	});
});

async function upload(
	client: Client,
	key: string,
	name: string,
	content: string | Buffer,
	fields: Record<string, string> = {}
) {
	const fd = new FormData();
	for (const [k, v] of Object.entries(fields)) fd.set(k, v);
	fd.set('file', new Blob([typeof content === 'string' ? content : new Uint8Array(content)]), name);
	const res = await client.request(api(`/projects/${key}/imports`), {
		method: 'POST',
		body: fd,
		headers: { accept: 'application/json' }
	});
	return { status: res.status, json: await res.json() };
}
const confirm = async (id: number, client = eng) => {
	const res = await client.request(api(`/imports/${id}/confirm`), {
		method: 'POST',
		headers: { accept: 'application/json' }
	});
	return { status: res.status, json: await res.json() };
};
const exportText = async (key: string, client = eng) => {
	const res = await client.get(api(`/projects/${key}/requirements.reqif`));
	return { res, text: await res.text() };
};
const counts = async (projectId: number) => ({
	requirements: Number(
		(await testDb()('requirements').where({ project_id: projectId }).count('* as n').first())!.n
	),
	revisions: Number(
		(await testDb()('requirement_revisions as v')
			.join('requirements as r', 'r.id', 'v.requirement_id')
			.where('r.project_id', projectId)
			.count('* as n')
			.first())!.n
	),
	imports: Number((await testDb()('imports').where({ project_id: projectId }).count('* as n').first())!.n)
});
const validates = (text: string) => {
	const f = join(mkdtempSync(join(tmpdir(), 'lw-reqif-api-')), 'x.reqif');
	writeFileSync(f, text);
	return xmllint(f);
};

const HEAD =
	'Identifier,Title,Statement,Parent identifier,Level,Assurance level,Verification methods,Sector lower bound,Sector upper bound,Required sector margin (%),Model';

describe('spreadsheet import (CSV)', () => {
	it('problems are listed by row and column; confirm is refused (422) and nothing is stored', async () => {
		const before = await counts(team.project.id);
		const csv = [
			HEAD,
			'CSV-1,Pitch loop,The pitch loop shall be absolutely stable.,,loop,B,analysis,0.5,1.8,20,Pitch plant',
			'CSV-2,Bad level,The loop shall hold.,,planet,B,analysis,,,,',
			'CSV-3,Bad number,The loop shall hold.,CSV-9,loop,B,analysis,half,1.8,,Pitch plant'
		].join('\n');
		const r = await upload(eng, team.project.key, 'reqs.csv', csv);
		expect(r.status).toBe(201);
		expect(r.json.counts).toMatchObject({ new: 2, changed: 0, unchanged: 0 });
		expect(r.json.problems).toEqual([
			{
				row: 4,
				column: 'H (Sector lower bound)',
				field: 'sectorLower',
				message: 'Sector lower bound: "half" is not a number.'
			},
			{
				row: 3,
				identifier: 'CSV-2',
				column: 'E (Level)',
				field: 'level',
				message: 'Level: "planet" is not one of system, subsystem, loop.'
			},
			{
				row: 4,
				identifier: 'CSV-3',
				field: 'parentIdentifier',
				column: 'D (Parent identifier)',
				message: 'The parent CSV-9 is neither in the file nor in the project.'
			}
		]);
		const c = await confirm(r.json.id);
		expect(c.status).toBe(422);
		expect(c.json.error.problems).toHaveLength(3);
		const after = await counts(team.project.id);
		expect(after).toEqual({ ...before, imports: before.imports + 1 });
	});

	it('a good file is applied in one go; importing it again changes nothing', async () => {
		const csv = [
			HEAD,
			'CSV-10,Pitch loop,"The pitch loop shall be absolutely stable in [0.5, 1.8].",,loop,B,"analysis, test",0.5,1.8,20,Pitch plant',
			'CSV-11,Pitch child,The child loop shall be stable.,CSV-10,loop,C,test,,,,'
		].join('\r\n');
		const r = await upload(eng, team.project.key, 'good.csv', csv);
		expect(r.status).toBe(201);
		expect(r.json.problems).toEqual([]);
		expect(r.json.counts).toMatchObject({ new: 2 });
		const c = await confirm(r.json.id);
		expect(c.status).toBe(200);
		expect(c.json).toMatchObject({ created: ['CSV-10', 'CSV-11'], revised: [], specifications: 1, links: 1 });
		const db = testDb();
		const rows = await db('requirements as r')
			.join('requirement_revisions as v', function () {
				this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
			})
			.where('r.project_id', team.project.id)
			.whereIn('r.identifier', ['CSV-10', 'CSV-11'])
			.orderBy('r.identifier')
			.select('r.id', 'r.identifier', 'v.title', 'v.methods', 'v.assurance_level', 'r.current_spec_id');
		expect(rows.map((x) => [x.identifier, x.title, x.methods, x.assurance_level])).toEqual([
			['CSV-10', 'Pitch loop', ['analysis', 'test'], 'B'],
			['CSV-11', 'Pitch child', ['test'], 'C']
		]);
		const spec = await db('stability_specs').where({ id: rows[0].current_spec_id }).first();
		expect(spec.check).toEqual({ type: 'circle', sector: [0.5, 1.8] });
		expect(spec.required_margin).toBe(0.2);
		const link = await db('requirement_links')
			.where({ child_id: rows[1].id, parent_id: rows[0].id })
			.whereNull('removed_at')
			.first();
		expect(link).toBeTruthy();
		// The specification queued its analysis like any edit, in the same transaction.
		expect(
			Number((await db('analysis_runs').where({ requirement_id: rows[0].id }).count('* as n').first())!.n)
		).toBeGreaterThan(0);
		const audit = await db('audit_events')
			.where({ project_id: team.project.id, action: 'import.confirm' })
			.orderBy('seq', 'desc')
			.first();
		expect(audit.after).toMatchObject({ import: r.json.id, created: 2, links: 1, specifications: 1 });

		const before = await counts(team.project.id);
		const again = await upload(eng, team.project.key, 'good.csv', csv);
		expect(again.json.counts).toMatchObject({ new: 0, changed: 0, unchanged: 2 });
		expect((await confirm(again.json.id)).json).toMatchObject({
			created: [],
			revised: [],
			links: 0,
			specifications: 0
		});
		expect(await counts(team.project.id)).toEqual({ ...before, imports: before.imports + 1 });
	});

	it('a missing mandatory field and a derived-from cycle are problems', async () => {
		const csv = [
			'Identifier,Title,Statement,Parent identifier,Assurance level,Verification methods',
			'CYC-1,A,The loop shall hold.,CYC-2,B,analysis',
			'CYC-2,B,The loop shall hold.,CYC-1,B,analysis'
		].join('\n');
		const r = await upload(eng, team.project.key, 'cycle.csv', csv);
		expect(r.json.problems).toEqual([
			{
				row: 2,
				identifier: 'CYC-1',
				field: 'level',
				message:
					'Level is missing: the file does not give it (no attribute or column is mapped to it) and no default is set.'
			},
			{
				row: 3,
				identifier: 'CYC-2',
				field: 'level',
				message:
					'Level is missing: the file does not give it (no attribute or column is mapped to it) and no default is set.'
			}
		]);
		const withDefault = await upload(eng, team.project.key, 'cycle.csv', csv, {
			mapping: JSON.stringify({
				columns: {
					identifier: 'Identifier',
					title: 'Title',
					statement: 'Statement',
					parentIdentifier: 'Parent identifier',
					assuranceLevel: 'Assurance level',
					methods: 'Verification methods'
				},
				defaults: { level: 'loop' }
			})
		});
		expect(withDefault.json.problems).toEqual([
			{ row: 3, identifier: 'CYC-2', message: 'Derived-from cycle: CYC-2 → CYC-1 → CYC-2.' }
		]);
	});

	it('XLSX: the template workbook is read with the same columns', async () => {
		const res = await eng.get(api(`/projects/${team.project.key}/imports/template.xlsx`));
		expect(res.status).toBe(200);
		const bytes = Buffer.from(await res.arrayBuffer());
		const r = await upload(eng, team.project.key, 'template.xlsx', bytes);
		expect(r.status).toBe(201);
		expect(r.json.problems).toEqual([]);
		expect(r.json.counts).toMatchObject({ new: 1, changed: 0, unchanged: 0 });
		expect(r.json.requirements).toEqual([
			{
				identifier: null,
				objectId: null,
				row: 2,
				action: 'new',
				changed: [],
				specification: true,
				links: [],
				fileStatus: null,
				willBe: 'draft',
				statusNote: null
			}
		]);
		expect(r.json.mapping.sheet).toBe('Requirements');
	});
});

describe('ReqIF export and import', () => {
	it('exports the project as an attachment of type application/xml that validates, and records it', async () => {
		const { res, text } = await exportText(team.project.key, viewer);
		expect(res.status).toBe(200);
		expect(res.headers.get('content-type')).toMatch(/^application\/xml/);
		expect(res.headers.get('content-disposition')).toBe(
			`attachment; filename="${team.project.key}-requirements.reqif"`
		);
		expect(validates(text).ok).toBe(true);
		expect(text).toContain('THE-VALUE="CSV-10"');
		const ev = await testDb()('audit_events')
			.where({ project_id: team.project.id, action: 'trace.export' })
			.orderBy('seq', 'desc')
			.first();
		expect(ev.after).toMatchObject({ format: 'reqif' });
	});

	it('a changed statement is a change with a word diff; confirming makes a new revision; 409 when the project moved', async () => {
		const { text } = await exportText(team.project.key);
		const changed = text.replace(
			'The child loop shall be stable.',
			'The child loop shall be absolutely stable.'
		);
		const r = await upload(eng, team.project.key, 'changed.reqif', changed);
		expect(r.status).toBe(201);
		expect(r.json.problems).toEqual([]);
		expect(r.json.counts.changed).toBe(1);
		const item = r.json.requirements.find((i: { identifier: string }) => i.identifier === 'CSV-11');
		expect(item).toMatchObject({ action: 'changed', changed: ['statement'] });

		// Someone edits the project before the confirm: 409, nothing applied.
		const other = await testDb()('requirements')
			.where({ project_id: team.project.id, identifier: 'CSV-10' })
			.first();
		const patch = await eng.json(api(`/requirements/${other.id}`), 'PATCH', {
			revision: other.current_revision,
			title: 'Pitch loop (edited)'
		});
		expect(patch.status).toBe(200);
		const before = await counts(team.project.id);
		const stale = await confirm(r.json.id);
		expect(stale.status).toBe(409);
		expect(stale.json.error.message).toMatch(/changed since import/);
		expect(await counts(team.project.id)).toEqual(before);

		const fresh = await upload(eng, team.project.key, 'changed.reqif', changed);
		// The edited title is in the project now; the file still has the old one, so CSV-10 changes too.
		expect(fresh.json.counts.changed).toBe(2);
		const ok = await confirm(fresh.json.id);
		expect(ok.status).toBe(200);
		expect(ok.json.revised.sort()).toEqual(['CSV-10', 'CSV-11']);
		const child = await testDb()('requirements')
			.where({ project_id: team.project.id, identifier: 'CSV-11' })
			.first();
		const rev = await testDb()('requirement_revisions')
			.where({ requirement_id: child.id, revision: child.current_revision })
			.first();
		expect(rev.statement).toBe('The child loop shall be absolutely stable.');
		expect(child.current_revision).toBe(2);
		// The import is confirmed once only.
		expect((await confirm(fresh.json.id)).status).toBe(409);
	});

	it('the hand-written file goes in; every value lands, every requirement a draft', async () => {
		const p = await createProject();
		await addMember(team.users.engineer.id, p.id, 'engineer');
		const file = readFileSync(resolve('tests/reqif/handwritten.reqif'));
		const r = await upload(eng, p.key, 'supplier.reqif', file);
		expect(r.status).toBe(201);
		expect(r.json.problems).toEqual([]);
		expect(r.json.counts).toMatchObject({ new: 3 });
		expect((await confirm(r.json.id)).status).toBe(200);
		const db = testDb();
		const rows = await db('requirements as r')
			.join('requirement_revisions as v', function () {
				this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
			})
			.where('r.project_id', p.id)
			.orderBy('r.identifier')
			.select(
				'r.id',
				'r.identifier',
				'v.title',
				'v.level',
				'v.assurance_level',
				'v.methods',
				'r.review_state',
				'v.rationale'
			);
		expect(
			rows.map((x) => [
				x.identifier,
				x.title,
				x.level,
				x.assurance_level,
				x.methods,
				x.review_state,
				x.rationale
			])
		).toEqual([
			[
				'SUP-100',
				'Pitch loop stability & margins',
				'system',
				'A',
				['analysis', 'test'],
				'draft',
				'Customer clause 4.2.\nSecond line.'
			],
			['SUP-110', 'Actuator gain range', 'subsystem', 'B', ['inspection'], 'draft', ''],
			['SUP-111', 'Hover loop sector', 'loop', 'C', ['analysis'], 'draft', '']
		]);
		const id = Object.fromEntries(rows.map((x) => [x.identifier, Number(x.id)]));
		const links = await db('requirement_links')
			.whereIn('child_id', Object.values(id))
			.whereNull('removed_at')
			.orderBy(['child_id', 'parent_id']);
		expect(links.map((l) => [Number(l.child_id), Number(l.parent_id)])).toEqual([
			[id['SUP-110'], id['SUP-100']],
			[id['SUP-111'], id['SUP-100']],
			[id['SUP-111'], id['SUP-110']]
		]);
		// Exported again, the objects keep the file's identifiers and LAST-CHANGE.
		const { text } = await exportText(p.key);
		expect(text).toContain(
			'<SPEC-OBJECT IDENTIFIER="so-r3" LAST-CHANGE="2026-11-05T12:00:00.000Z" LONG-NAME="SUP-111">'
		);
		// And the same file again changes nothing.
		const again = await upload(eng, p.key, 'supplier.reqif', file);
		expect(again.json.counts).toMatchObject({ new: 0, changed: 0, unchanged: 3 });
	});

	it('a baseline exports exactly as frozen, whatever changed since', async () => {
		const p = await createProject();
		await addMember(team.users.engineer.id, p.id, 'engineer');
		await addMember(team.users.certifier.id, p.id, 'certifier');
		const make = async (title: string) => {
			const res = await eng.json(api(`/projects/${p.key}/requirements`), 'POST', {
				title,
				statement: `The ${title} loop shall be stable.`,
				level: 'loop',
				assuranceLevel: 'C',
				methods: ['test']
			});
			const body = await res.json();
			expect(res.status, JSON.stringify(body)).toBe(201);
			return body.requirement as { id: number };
		};
		const a = await make('outer');
		const b = await make('inner');
		await linkRequirements(b.id, a.id);
		const live = (await exportText(p.key)).text;
		const cert = await signedIn(team.users.certifier.email, team.users.certifier.password);
		// The freeze is the signed release: the certifier's password is entered again.
		const frozen = await cert.json(api(`/projects/${p.key}/baselines`), 'POST', {
			label: 'for the supplier',
			password: team.users.certifier.password
		});
		expect(frozen.status).toBe(201);
		const baseline = await frozen.json();
		const patch = await eng.json(api(`/requirements/${a.id}`), 'PATCH', {
			revision: 1,
			statement: 'The outer loop shall be absolutely stable.'
		});
		expect(patch.status).toBe(200);
		const res = await eng.get(api(`/projects/${p.key}/baselines/${baseline.id}/requirements.reqif`));
		expect(res.status).toBe(200);
		expect(res.headers.get('content-disposition')).toBe(
			`attachment; filename="${p.key}-baseline-${baseline.number}.reqif"`
		);
		const text = await res.text();
		expect(validates(text).ok).toBe(true);
		expect(text).toContain('The outer loop shall be stable.');
		expect(text).not.toContain('absolutely');
		// Apart from the titles (the baseline's name) the frozen file is the live one of that moment.
		const strip = (s: string) =>
			withoutCreationTime(s)
				.replace(/<TITLE>[^<]*<\/TITLE>/, '')
				.replace(/(<SPECIFICATION [^>]*LONG-NAME=")[^"]*"/, '$1"');
		expect(strip(text)).toBe(strip(live));
		expect((await exportText(p.key)).text).toContain('absolutely');
	});
});

describe('an import never approves', () => {
	// Approval is a signed review in Loopwarden (requirements/review.ts); a file's status is information.
	const approvedRef = 'lw-dt-status-approved';
	const reviewOf = async (projectId: number) =>
		testDb()('requirements as r')
			.join('requirement_revisions as v', function () {
				this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
			})
			.where('r.project_id', projectId)
			.orderBy('r.identifier')
			.select(
				'r.id',
				'r.identifier',
				'r.current_revision',
				'r.review_state',
				'r.approved_revision',
				'v.status'
			);

	it('a file that says approved: shown in the preview, not applied; new requirements are drafts, a change is a new draft revision', async () => {
		const p = await createProject();
		await addMember(team.users.engineer.id, p.id, 'engineer');
		// An approved requirement, as stored data (the factory writes the revision directly).
		const approved = await createFactoryRequirement(p.id, {
			title: 'Roll loop',
			statement: 'The roll loop shall be absolutely stable.',
			status: 'approved'
		});
		expect((await reviewOf(p.id))[0]).toMatchObject({ review_state: 'approved', approved_revision: 1 });
		const { text } = await exportText(p.key);
		expect(text).toContain(`<ENUM-VALUE-REF>${approvedRef}</ENUM-VALUE-REF>`);

		// Into an empty project: new, and a draft, with the file's "approved" shown as information.
		const q = await createProject();
		await addMember(team.users.engineer.id, q.id, 'engineer');
		const r = await upload(eng, q.key, 'approved.reqif', text);
		expect(r.status).toBe(201);
		expect(r.json.problems).toEqual([]);
		expect(r.json.counts).toMatchObject({ new: 1, statusNotApplied: 1 });
		expect(r.json.statusRule).toMatch(/not applied/);
		expect(r.json.requirements[0]).toMatchObject({
			action: 'new',
			fileStatus: 'approved',
			willBe: 'draft',
			statusNote: expect.stringContaining('not applied')
		});
		expect((await confirm(r.json.id)).status).toBe(200);
		expect(await reviewOf(q.id)).toMatchObject([
			{ identifier: approved.identifier, review_state: 'draft', approved_revision: null, status: 'draft' }
		]);
		const signed = await testDb()('signatures').where({ project_id: q.id }).count('* as n').first();
		expect(Number(signed!.n)).toBe(0);

		// The same file back into its own project: the status agrees, nothing changes, no note.
		const same = await upload(eng, p.key, 'approved.reqif', text);
		expect(same.json.counts).toMatchObject({ new: 0, changed: 0, unchanged: 1, statusNotApplied: 0 });
		expect(same.json.requirements[0]).toMatchObject({
			fileStatus: 'approved',
			willBe: 'approved',
			statusNote: null
		});

		// A changed statement on the approved requirement: a new draft revision; revision 1 stays in force.
		const changed = text.replace(
			'The roll loop shall be absolutely stable.',
			'The roll loop shall be absolutely stable in the sector [0.5, 2].'
		);
		const c = await upload(eng, p.key, 'changed.reqif', changed);
		expect(c.json.problems).toEqual([]);
		expect(c.json.requirements[0]).toMatchObject({
			action: 'changed',
			changed: ['statement'],
			fileStatus: 'approved',
			willBe: 'draft',
			statusNote: expect.stringContaining('“approved”')
		});
		expect((await confirm(c.json.id)).json).toMatchObject({ revised: [approved.identifier] });
		expect(await reviewOf(p.id)).toMatchObject([
			{ current_revision: 2, review_state: 'draft', approved_revision: 1, status: 'draft' }
		]);
	});

	it('a mapping cannot set a status (refused by name, nothing stored)', async () => {
		const before = await counts(team.project.id);
		const r = await upload(eng, team.project.key, 'a.csv', HEAD, {
			mapping: JSON.stringify({ defaults: { status: 'approved' } })
		});
		expect(r.status).toBe(400);
		expect(r.json.error.fields.mapping).toMatch(/^mapping\.defaults/);
		expect(r.json.error.fields.mapping).toMatch(/status/);
		expect(await counts(team.project.id)).toEqual(before);
	});
});

describe('bad input: a clear JSON error naming where, nothing stored', () => {
	it('not XML (400), XML that is not ReqIF (422), over the size limit (413), an unknown field (400), a bad mapping (400)', async () => {
		const before = await counts(team.project.id);
		const notXml = await upload(eng, team.project.key, 'x.reqif', '<REQ-IF>\n<THE-HEADER>\n</REQ-IF>');
		expect(notXml.status).toBe(400);
		expect(notXml.json.error.where).toBe('line 3, column 1');
		expect(notXml.json.error.fields.file).toMatch(/not well-formed XML/);
		const notReqif = await upload(
			eng,
			team.project.key,
			'x.reqif',
			'<?xml version="1.0"?><html><body/></html>'
		);
		expect(notReqif.status).toBe(422);
		expect(notReqif.json.error.message).toMatch(/root element is <html>, not <REQ-IF>/);
		expect(notReqif.json.error.where).toBe('root element');
		const big = await upload(eng, team.project.key, 'big.csv', Buffer.alloc(4 * 1024 * 1024 + 10, 'a'));
		expect(big.status).toBe(413);
		expect(big.json.error.fields.file).toMatch(/At most 4 MiB/);
		const unknown = await upload(eng, team.project.key, 'a.csv', HEAD, { colour: 'red' });
		expect(unknown.status).toBe(400);
		expect(unknown.json.error.fields).toEqual({ colour: 'Unknown field.' });
		const badMapping = await upload(eng, team.project.key, 'a.csv', HEAD, {
			mapping: JSON.stringify({ columns: {}, extra: 1 })
		});
		expect(badMapping.status).toBe(400);
		expect(badMapping.json.error.fields.mapping).toMatch(/^mapping/);
		const badFormat = await upload(eng, team.project.key, 'a.txt', HEAD, { format: 'docx' });
		expect(badFormat.status).toBe(400);
		expect(await counts(team.project.id)).toEqual(before);
	});

	it('a viewer may export but not import', async () => {
		const r = await upload(viewer, team.project.key, 'a.csv', HEAD);
		expect(r.status).toBe(403);
	});
});
