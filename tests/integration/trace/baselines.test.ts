import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { ENGINE_VERSION } from '../../../src/lib/stability/index';
import {
	closeTestDb,
	createEvidence,
	createModel,
	createModelVersion,
	createRequirement,
	createRun,
	createSpec,
	createTeam,
	lagModel,
	linkRequirements,
	removeLink,
	reviewEvidence,
	reviseRequirement,
	testDb
} from '../../factories';
import { signedIn, type Client } from '../../helpers/http';

// Baselines on a scripted project: the manifest hash is a function of the state (same state, same hash;
// any change, a new hash), the database refuses to change or delete a baseline, TBD/TBR and pending
// re-runs block a freeze, and the comparison lists exactly the changes the script made.

let team: Awaited<ReturnType<typeof createTeam>>;
let certifier: Client;
let viewer: Client;
const api = () => `/api/v1/projects/${team.project.key}/baselines`;

interface Summary {
	id: number;
	number: number;
	manifest_hash: string;
}

async function freeze(label: string, confirmUnchanged?: boolean): Promise<Summary> {
	const res = await certifier.json(api(), 'POST', {
		label,
		password: team.users.certifier.password,
		...(confirmUnchanged ? { confirmUnchanged } : {})
	});
	const body = await res.json();
	expect(res.status, JSON.stringify(body)).toBe(201);
	return body;
}

const run = (id: number, verdict: 'pass' | 'fail', threshold: number) =>
	createRun(id, {
		engineVersion: ENGINE_VERSION,
		verdict,
		result: { type: 'popov', verdict, threshold, numbers: {}, explanation: 'scripted' }
	});

let m1: { id: number };
let m2: { id: number };
let a1: { id: number; identifier: string };
let a2: { id: number; identifier: string };
let a3: { id: number; identifier: string };
let e1: { id: number; fileId: number };

beforeAll(async () => {
	team = await createTeam();
	certifier = await signedIn(team.users.certifier.email, team.users.certifier.password);
	viewer = await signedIn(team.users.viewer.email, team.users.viewer.password);
	const pid = team.project.id;
	m1 = await createModel(pid, { name: 'Elevon actuator' });
	m2 = await createModel(pid, { name: 'Wing-tilt actuator' });
	await createModelVersion(m1.id, lagModel(1, 0.1));
	await createModelVersion(m2.id, lagModel(2, 0.2));
	a1 = await createRequirement(pid, { title: 'Pitch loop stability', level: 'system' });
	await createSpec(a1.id, { modelId: m1.id, check: { type: 'popov', sector: [0, 2] } });
	await run(a1.id, 'pass', 3);
	a2 = await createRequirement(pid, { title: 'Tilt servo sector', level: 'subsystem' });
	await linkRequirements(a2.id, a1.id);
	await createSpec(a2.id, { modelId: m2.id, check: { type: 'popov', sector: [0, 1.5] } });
	await run(a2.id, 'pass', 2.5);
	a3 = await createRequirement(pid, { title: 'Tilt rig check', level: 'loop', methods: ['test'] });
	e1 = await createEvidence(pid, [a3.id], { title: 'Tilt rig sweep' });
});
afterAll(closeTestDb);

describe('baseline manifest hash', () => {
	it('is the same for the same state and changes with every change', async () => {
		const first = await freeze('start');
		// The same state again: refused until confirmed (issue 13), then frozen with the same hash.
		const refused = await certifier.json(api(), 'POST', {
			label: 'start again',
			password: team.users.certifier.password
		});
		expect(refused.status).toBe(409);
		const again = await freeze('start again', true);
		expect(again.manifest_hash).toBe(first.manifest_hash);
		expect(again.number).toBe(first.number + 1);

		const seen = new Set([first.manifest_hash]);
		const changes: [string, () => Promise<unknown>][] = [
			[
				'requirement text',
				() => reviseRequirement(a3.id, { statement: 'The tilt loop shall remain stable on the rig.' })
			],
			['trace link added', async () => linkRequirements(a3.id, a1.id)],
			[
				'trace link removed',
				async () => {
					const l = await testDb()('requirement_links')
						.where({ child_id: a3.id, parent_id: a1.id })
						.whereNull('removed_at')
						.first('id');
					await removeLink(l.id);
				}
			],
			['evidence reviewed', () => reviewEvidence(e1.fileId, 'accepted')],
			[
				'model version published and re-run',
				async () => {
					await createModelVersion(m1.id, lagModel(1.5, 0.1));
					await run(a1.id, 'pass', 2.8);
				}
			],
			[
				'new requirement',
				() => createRequirement(team.project.id, { title: 'Added later', methods: ['inspection'] })
			]
		];
		const hashes = [first.manifest_hash];
		for (const [what, change] of changes) {
			await change();
			const b = await freeze(`after ${what}`, what === 'trace link removed');
			if (what === 'trace link removed') {
				// Removing the link restores the state before it was added: the same manifest, the same hash.
				expect(b.manifest_hash).toBe(hashes[hashes.length - 2]);
				hashes.push(b.manifest_hash);
				continue;
			}
			expect(seen.has(b.manifest_hash), `hash after "${what}" is new`).toBe(false);
			seen.add(b.manifest_hash);
			hashes.push(b.manifest_hash);
		}
		expect(seen.size).toBe(changes.length);
	});

	it('the stored manifest still hashes to its SHA-256 and is readable by viewers', async () => {
		const list = (await (await viewer.get(api(), { accept: 'application/json' })).json())
			.baselines as Summary[];
		const res = await viewer.get(`${api()}/${list[0].id}`, { accept: 'application/json' });
		expect(res.status).toBe(200);
		const b = await res.json();
		expect(b.verified).toBe(true);
		expect(b.manifest.engineVersion).toBe(ENGINE_VERSION);
		expect(b.manifest.requirements.map((r: { identifier: string }) => r.identifier)).toContain(a3.identifier);
		const r3 = b.manifest.requirements.find((r: { identifier: string }) => r.identifier === a3.identifier);
		const rev = await testDb()('requirement_revisions')
			.where({ requirement_id: a3.id })
			.orderBy('revision', 'desc')
			.first();
		expect(r3).toMatchObject({
			revision: rev.revision,
			contentHash: rev.content_hash,
			statement: rev.statement
		});
		const ev = b.manifest.evidence.find((e: { evidenceId: number }) => e.evidenceId === e1.id);
		const file = await testDb()('evidence_files').where({ id: e1.fileId }).first('sha256');
		expect(ev).toMatchObject({ sha256: file.sha256, review: { decision: 'accepted' } });
	});
});

describe('a freeze with nothing changed (issue 13)', () => {
	it('says "nothing changed since baseline N", stores nothing and freezes only when confirmed', async () => {
		const t = await createTeam();
		const c = await signedIn(t.users.certifier.email, t.users.certifier.password);
		const url = `/api/v1/projects/${t.project.key}/baselines`;
		await createRequirement(t.project.id, { title: 'Inspected wiring', methods: ['inspection'] });
		const first = await c.json(url, 'POST', { label: 'Issue 1', password: t.users.certifier.password });
		expect(first.status).toBe(201);
		const b1 = (await first.json()) as Summary;

		const res = await c.json(url, 'POST', { label: 'Issue 1 again', password: t.users.certifier.password });
		expect(res.status).toBe(409);
		const body = await res.json();
		expect(body.error.message).toMatch(/^Nothing changed since baseline 1 \("Issue 1"\)/);
		expect(body.error.unchangedSince).toEqual({
			id: b1.id,
			number: 1,
			label: 'Issue 1',
			manifestHash: b1.manifest_hash
		});
		const count = async () =>
			Number((await testDb()('baselines').where({ project_id: t.project.id }).count('* as n').first())?.n);
		expect(await count()).toBe(1);

		// Unknown fields and a confirmation that is not a boolean are refused with the field named.
		const unknown = await c.json(url, 'POST', { label: 'x', confirm: true });
		expect(unknown.status).toBe(400);
		expect((await unknown.json()).error.message).toContain('unknown field "confirm"');
		const notBool = await c.json(url, 'POST', { label: 'x', confirmUnchanged: 'yes' });
		expect(notBool.status).toBe(400);
		expect((await notBool.json()).error.fields).toHaveProperty('confirmUnchanged');
		expect(await count()).toBe(1);

		// The page says it before the freeze and offers the confirmation.
		const html = await (await c.get(`/p/${t.project.key}/baselines`, { accept: 'text/html' })).text();
		expect(html).toContain('data-testid="unchanged"');
		expect(html).toContain('Nothing changed since baseline 1');
		expect(html).toContain('name="confirmUnchanged"');
		// Without the box ticked the form is refused with the same words; ticked, it freezes baseline 2.
		const form = await c.action(`/p/${t.project.key}/baselines?/freeze`, {
			label: 'Issue 1b',
			note: '',
			password: t.users.certifier.password
		});
		expect(form.type).toBe('failure');
		expect(form.status).toBe(409);
		expect(JSON.stringify(form.data)).toContain('Nothing changed since baseline 1');
		const ok = await c.action(`/p/${t.project.key}/baselines?/freeze`, {
			label: 'Issue 1b',
			note: '',
			confirmUnchanged: 'true',
			password: t.users.certifier.password
		});
		expect(ok.type).toBe('redirect');
		const again = await c.json(url, 'POST', { label: 'Issue 1c', password: t.users.certifier.password });
		expect((await again.json()).error.message).toMatch(/^Nothing changed since baseline 2 /);

		// A change: no question asked.
		await createRequirement(t.project.id, { title: 'Inspected connectors', methods: ['inspection'] });
		const changed = await c.json(url, 'POST', { label: 'Issue 2', password: t.users.certifier.password });
		expect(changed.status).toBe(201);
		expect(await count()).toBe(3);
	});
});

describe('baselines are immutable in the database', () => {
	it('refuses UPDATE and DELETE', async () => {
		const b = await testDb()('baselines').where({ project_id: team.project.id }).first('id', 'label');
		await expect(testDb()('baselines').where({ id: b.id }).update({ label: 'edited' })).rejects.toThrow(
			/immutable/
		);
		await expect(testDb()('baselines').where({ id: b.id }).update({ manifest: '{}' })).rejects.toThrow(
			/immutable/
		);
		await expect(testDb()('baselines').where({ id: b.id }).delete()).rejects.toThrow(/immutable/);
		expect((await testDb()('baselines').where({ id: b.id }).first('label')).label).toBe(b.label);
	});
});

describe('what blocks a baseline', () => {
	it('TBD/TBR and pending re-runs are refused with the list, and nothing is stored', async () => {
		const t = await createTeam();
		const c = await signedIn(t.users.certifier.email, t.users.certifier.password);
		const m = await createModel(t.project.id);
		await createModelVersion(m.id);
		const tbd = await createRequirement(t.project.id, {
			statement: 'The loop shall be stable for gains up to TBR.'
		});
		const pend = await createRequirement(t.project.id, { title: 'Awaiting its run' });
		await createSpec(pend.id, { modelId: m.id });
		await createRequirement(t.project.id, { title: 'Fine', methods: ['inspection'] });
		const res = await c.json(`/api/v1/projects/${t.project.key}/baselines`, 'POST', {
			label: 'blocked',
			password: t.users.certifier.password
		});
		expect(res.status).toBe(409);
		const body = await res.json();
		expect(body.error.blockers).toEqual([
			{
				id: tbd.id,
				identifier: tbd.identifier,
				title: tbd.title,
				reasons: ['The statement still holds the placeholder "TBR".']
			},
			{
				id: pend.id,
				identifier: pend.identifier,
				title: pend.title,
				reasons: ['The analysis of the current inputs has not finished.']
			}
		]);
		// One grammatical sentence, said once.
		expect(body.error.message).toMatch(/^2 requirements block a baseline: /);
		const stored = await testDb()('baselines').where({ project_id: t.project.id }).count('* as n').first();
		expect(Number(stored?.n)).toBe(0);
		// The form shows the same list.
		const form = await c.action(`/p/${t.project.key}/baselines?/freeze`, {
			label: 'blocked',
			note: '',
			password: t.users.certifier.password
		});
		expect(form.type).toBe('failure');
		expect(form.status).toBe(409);
		expect(JSON.stringify(form.data)).toContain(tbd.identifier);
		// The page: the blocker is a link to the requirement, the message is there once, the button is off.
		const html = await (await c.get(`/p/${t.project.key}/baselines`, { accept: 'text/html' })).text();
		expect(html).toContain(`href="/p/${t.project.key}/requirements/${tbd.id}"`);
		expect(html.match(/requirements block a baseline/g)?.length).toBe(1);
		expect(html).toMatch(/<button class="btn" disabled[^>]*>Freeze and sign the release<\/button>/);
	});

	it('one placeholder of any kind the quality rules know blocks it (TBS too)', async () => {
		const t = await createTeam();
		const c = await signedIn(t.users.certifier.email, t.users.certifier.password);
		const r = await createRequirement(t.project.id, {
			statement: 'The loop shall be stable for gains up to TBS.',
			methods: ['inspection']
		});
		const res = await c.json(`/api/v1/projects/${t.project.key}/baselines`, 'POST', {
			label: 'blocked',
			password: t.users.certifier.password
		});
		expect(res.status).toBe(409);
		const body = await res.json();
		expect(body.error.message).toMatch(/^1 requirement blocks a baseline: /);
		expect(body.error.blockers).toEqual([
			{
				id: r.id,
				identifier: r.identifier,
				title: r.title,
				reasons: ['The statement still holds the placeholder "TBS".']
			}
		]);
	});

	it('an empty name is a field error', async () => {
		const res = await certifier.json(api(), 'POST', { label: '  ' });
		expect(res.status).toBe(400);
		expect((await res.json()).error.fields).toHaveProperty('label');
	});

	it('viewers may not freeze', async () => {
		const res = await viewer.json(api(), 'POST', { label: 'not mine' });
		expect(res.status).toBe(403);
	});
});

describe('comparison of two baselines', () => {
	it('lists exactly the scripted changes', async () => {
		const t = await createTeam();
		const c = await signedIn(t.users.certifier.email, t.users.certifier.password);
		const pid = t.project.id;
		const mA = await createModel(pid, { name: 'Propeller governor' });
		const mB = await createModel(pid, { name: 'DC-link converter' });
		await createModelVersion(mA.id, lagModel(1, 0.1));
		const mB1 = await createModelVersion(mB.id, lagModel(1, 0.3));
		const r1 = await createRequirement(pid, { title: 'Governor stability', level: 'system' });
		await createSpec(r1.id, { modelId: mA.id, check: { type: 'popov', sector: [0, 2] } });
		await run(r1.id, 'pass', 3);
		const r2 = await createRequirement(pid, {
			title: 'Converter sector',
			level: 'subsystem',
			statement:
				'The converter loop shall remain absolutely stable for every time-invariant gain in the sector [0, 1.5].'
		});
		await linkRequirements(r2.id, r1.id);
		await createSpec(r2.id, { modelId: mB.id, check: { type: 'popov', sector: [0, 1.5] } });
		const run2a = await run(r2.id, 'pass', 2.5);
		const r3 = await createRequirement(pid, { title: 'Converter rig', level: 'loop', methods: ['test'] });
		const ev = await createEvidence(pid, [r3.id], { title: 'Converter sweep' });

		const post = async (label: string) => {
			const res = await c.json(`/api/v1/projects/${t.project.key}/baselines`, 'POST', {
				label,
				password: t.users.certifier.password
			});
			expect(res.status).toBe(201);
			return (await res.json()) as Summary;
		};
		const b1 = await post('before');

		// The script: one text revision, one new model version with a failing re-run, one new link,
		// one evidence review, one new requirement.
		await reviseRequirement(r3.id, { statement: 'The converter loop shall remain stable on the rig.' });
		const mB2 = await createModelVersion(mB.id, lagModel(4, 0.3));
		const run2b = await run(r2.id, 'fail', 1.2);
		await linkRequirements(r3.id, r1.id);
		await reviewEvidence(ev.fileId, 'accepted');
		const r4 = await createRequirement(pid, { title: 'Inspection of wiring', methods: ['inspection'] });
		const b2 = await post('after');

		const res = await c.get(`/p/${t.project.key}/baselines/compare?from=${b1.id}&to=${b2.id}`, {
			accept: 'text/html'
		});
		expect(res.status).toBe(200);
		const { compare } = await import('../../../src/lib/server/baselines/service');
		const { comparison } = await compare(pid, b1.id, b2.id);
		expect(comparison.requirements.added).toEqual([
			{ identifier: r4.identifier, title: 'Inspection of wiring' }
		]);
		expect(comparison.requirements.removed).toEqual([]);
		expect(comparison.unchanged).toBe(1);
		const changed = Object.fromEntries(
			comparison.requirements.changed.map((r) => [
				r.identifier,
				r.changes.map((ch) => [ch.field, ch.before, ch.after])
			])
		);
		expect(Object.keys(changed).sort()).toEqual([r2.identifier, r3.identifier].sort());
		expect(changed[r2.identifier]).toEqual([
			[
				'model version',
				`DC-link converter v1 (${mB1.hash.slice(0, 12)})`,
				`DC-link converter v2 (${mB2.hash.slice(0, 12)})`
			],
			['latest verdict', `pass (run ${run2a.id})`, `not proved (run ${run2b.id})`],
			['proved numbers', 'proved upper bound 2.5 vs required 1.5', 'proved upper bound 1.2 vs required 1.5'],
			['state', '✓ Verified by analysis', '✕ Not proved']
		]);
		expect(changed[r3.identifier]).toEqual([
			['revision', '1', '2'],
			[
				'statement',
				'The loop shall remain absolutely stable for every gain in the sector [0.5, 2].',
				'The converter loop shall remain stable on the rig.'
			],
			['derived from', '', r1.identifier],
			['evidence', `#${ev.id} r1 awaiting review`, `#${ev.id} r1 accepted`],
			['state', '… Pending', '✓ Verified by test']
		]);
		expect(comparison.modelVersions).toEqual({
			added: [`DC-link converter v2 (${mB2.hash.slice(0, 12)})`],
			removed: []
		});
		expect(comparison.links).toEqual({
			added: [`${r3.identifier} derived from ${r1.identifier}`],
			removed: []
		});
		expect(comparison.evidence.added).toEqual([]);
		expect(
			comparison.evidence.changed.map((e) => [
				e.before.endsWith('awaiting review'),
				e.after.endsWith('accepted')
			])
		).toEqual([[true, true]]);

		// The other way round the new requirement is removed; against the current state nothing changed.
		const back = await compare(pid, b2.id, b1.id);
		expect(back.comparison.requirements.removed).toEqual([
			{ identifier: r4.identifier, title: 'Inspection of wiring' }
		]);
		const now = await compare(pid, b2.id, 'now');
		expect(now.to.hash).toBe(b2.manifest_hash);
		expect(now.comparison.requirements.changed).toEqual([]);
	});
});

describe('baseline export', () => {
	it('writes the frozen manifest as the same workbook, with the baseline on the cover', async () => {
		const ExcelJS = (await import('exceljs')).default;
		const list = (await (await viewer.get(api(), { accept: 'application/json' })).json())
			.baselines as Summary[];
		const first = list[list.length - 1];
		const res = await viewer.get(`${api()}/${first.id}/trace-matrix.xlsx`);
		expect(res.status).toBe(200);
		const wb = new ExcelJS.Workbook();
		await wb.xlsx.load(Buffer.from(await res.arrayBuffer()) as never);
		const cover = wb.getWorksheet('Cover')!;
		const values: Record<string, string> = {};
		cover.eachRow((row) => {
			values[String(row.getCell(1).value ?? '')] = String(row.getCell(2).value ?? '');
		});
		expect(values.Baseline).toBe(`#${first.number} start`);
		expect(values['Manifest SHA-256']).toBe(first.manifest_hash);
		// The first baseline was frozen before a3's revision and before the later requirement.
		const matrix = wb.getWorksheet('Trace matrix')!;
		expect(matrix.rowCount - 1).toBe(3);
		const reqs = wb.getWorksheet('Requirements')!;
		const a3row = reqs.getRows(2, 3)!.find((r) => r.getCell(1).value === a3.identifier)!;
		expect(a3row.getCell(2).value).toBe(1);
	});
});

describe('the frozen revision of each requirement (issue 15)', () => {
	// A separate project, so the revisions made here change no manifest of the tests above.
	let t: Awaited<ReturnType<typeof createTeam>>;
	let cert: Client;
	const base = () => `/api/v1/projects/${t.project.key}/baselines`;
	const freezeT = async (label: string) => {
		const res = await cert.json(base(), 'POST', { label, password: t.users.certifier.password });
		const body = await res.json();
		expect(res.status, JSON.stringify(body)).toBe(201);
		return body as Summary;
	};
	const stored = async (id: number) => {
		const res = await cert.get(`${base()}/${id}`, { accept: 'application/json' });
		expect(res.status).toBe(200);
		return res.json();
	};
	const entry = (b: { manifest: { requirements: { identifier: string }[] } }, identifier: string) =>
		b.manifest.requirements.find((r) => r.identifier === identifier) as Record<string, unknown>;
	let approved: { id: number; identifier: string };
	let never: { id: number; identifier: string };

	beforeAll(async () => {
		t = await createTeam();
		cert = await signedIn(t.users.certifier.email, t.users.certifier.password);
		approved = await createRequirement(t.project.id, {
			title: 'Roll loop inspection',
			statement: 'The roll loop gain schedule shall be inspected against the sector bound.',
			methods: ['inspection']
		});
		never = await createRequirement(t.project.id, {
			title: 'Yaw loop inspection',
			statement: 'The yaw loop gain schedule shall be inspected.',
			methods: ['inspection'],
			status: 'draft'
		});
	});

	it('holds the approved revision, not a newer unapproved draft, and says which revision is frozen', async () => {
		const r1 = await testDb()('requirement_revisions')
			.where({ requirement_id: approved.id, revision: 1 })
			.first();
		await reviseRequirement(approved.id, {
			statement: 'The roll loop gain schedule shall be inspected against the sector bound [0, 2].',
			status: 'draft'
		});
		const b = await stored((await freezeT('approved text')).id);
		expect(b.verified).toBe(true);
		expect(entry(b, approved.identifier)).toMatchObject({
			revision: 1,
			statement: r1.statement,
			title: r1.title,
			contentHash: r1.content_hash,
			frozen: { revision: 1, approvedRevision: 1, currentRevision: 2, newerUnapprovedRevision: true }
		});
		expect(JSON.stringify(b.manifest)).not.toContain('against the sector bound [0, 2]');
		// Never approved: the current text, marked as such.
		expect(entry(b, never.identifier)).toMatchObject({
			revision: 1,
			statement: 'The yaw loop gain schedule shall be inspected.',
			frozen: { revision: 1, approvedRevision: null, currentRevision: 1, newerUnapprovedRevision: false }
		});
		const html = await (
			await cert.get(`/p/${t.project.key}/baselines/${b.id}`, { accept: 'text/html' })
		).text();
		expect(html).toContain('the newer revision 2 is not approved and not in this baseline');
		expect(html).toContain('revision 1, never approved');

		// Once revision 2 is approved, the next baseline freezes its text.
		await reviseRequirement(approved.id, { status: 'approved' });
		const r3 = await testDb()('requirement_revisions')
			.where({ requirement_id: approved.id, revision: 3 })
			.first();
		const after = await stored((await freezeT('revision 3 approved')).id);
		expect(entry(after, approved.identifier)).toMatchObject({
			revision: 3,
			statement: r3.statement,
			contentHash: r3.content_hash,
			frozen: { revision: 3, approvedRevision: 3, currentRevision: 3, newerUnapprovedRevision: false }
		});
	});

	it('a manifest frozen before the frozen revision was kept still verifies, and its hash is SHA-256 of the canonical JSON', async () => {
		const list = (await (await cert.get(base(), { accept: 'application/json' })).json())
			.baselines as Summary[];
		const b = await stored(list[0].id);
		// An older manifest: the same content without `frozen`, stored as it was then.
		const old = {
			...b.manifest,
			requirements: b.manifest.requirements.map(({ frozen: _f, ...r }: Record<string, unknown>) => r)
		};
		// SHA-256 over JSON with keys sorted and no whitespace, written out here apart from the app's code.
		const sorted = (v: unknown): unknown =>
			Array.isArray(v)
				? v.map(sorted)
				: v && typeof v === 'object'
					? Object.fromEntries(
							Object.keys(v as object)
								.sort()
								.map((k) => [k, sorted((v as Record<string, unknown>)[k])])
						)
					: v;
		const text = JSON.stringify(sorted(old));
		const hash = createHash('sha256').update(text, 'utf8').digest('hex');
		expect(
			createHash('sha256')
				.update(JSON.stringify(sorted(b.manifest)), 'utf8')
				.digest('hex')
		).toBe(b.manifest_hash);
		const last = await testDb()('baselines').where({ project_id: t.project.id }).max('number as n').first();
		const [row] = await testDb()('baselines')
			.insert({
				project_id: t.project.id,
				number: Number(last?.n ?? 0) + 1,
				label: 'older format',
				manifest: text,
				manifest_hash: hash,
				engine_version: b.manifest.engineVersion,
				requirement_count: old.requirements.length,
				created_by_label: 'baselines test'
			})
			.returning('id');
		const oldBaseline = await stored(Number(row.id));
		expect(oldBaseline.verified).toBe(true);
		expect(oldBaseline.manifest_hash).toBe(hash);
		expect(entry(oldBaseline, approved.identifier).frozen).toBeUndefined();
		const html = await (
			await cert.get(`/p/${t.project.key}/baselines/${row.id}`, { accept: 'text/html' })
		).text();
		expect(html).toContain(hash);
	});
});
