import ExcelJS from 'exceljs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAUTION_TEXT } from '../../../src/lib/caution';
import type { MatrixRow } from '../../../src/lib/server/trace/service';
import { analysisStates, verificationOf } from '../../../src/lib/server/verification/service';
import { ENGINE_VERSION } from '../../../src/lib/stability/index';
import { ROLL_UP_RULE } from '../../../src/lib/verification/index';
import { closeTestDb, testDb } from '../../factories';
import { signedIn, type Client } from '../../helpers/http';
import { buildScenario } from './scenario';

// The trace matrix API on a scripted project whose states are known by construction (scenario.ts),
// and the spreadsheet and CSV exports read back and compared with the database cell by cell.

let s: Awaited<ReturnType<typeof buildScenario>>;
let viewer: Client;
const base = () => `/api/v1/projects/${s.team.project.key}`;

beforeAll(async () => {
	s = await buildScenario();
	viewer = await signedIn(s.team.users.viewer.email, s.team.users.viewer.password);
});
afterAll(closeTestDb);

async function page(query = '') {
	const res = await viewer.get(`${base()}/trace-matrix${query}`, { accept: 'application/json' });
	expect(res.status).toBe(200);
	return (await res.json()) as { rows: MatrixRow[]; total: number };
}

describe('trace matrix API', () => {
	it('gives each requirement the state its inputs imply', async () => {
		const body = await page('?limit=50');
		expect(body.total).toBe(7);
		const got = Object.fromEntries(body.rows.map((r) => [r.identifier, r.state]));
		expect(got).toEqual(s.expectedStates);
	});

	it('agrees with analysisStates() on every requirement', async () => {
		const body = await page('?limit=50');
		const ids = body.rows.map((r) => r.id);
		const theirs = await analysisStates(testDb(), ids);
		for (const r of body.rows) expect(r.analysisState).toBe(theirs.get(r.id)?.state);
	});

	it('agrees with verificationOf() asked for single requirements (the subtree read) on every one', async () => {
		const body = await page('?limit=50');
		for (const r of body.rows) {
			const theirs = (await verificationOf(testDb(), { requirementIds: [r.id] })).get(r.id)!;
			expect(r.state, r.identifier).toBe(theirs.state);
			expect(r.stateLabel, r.identifier).toBe(theirs.label);
			expect(r.blockers.map((b) => b.text)).toEqual(theirs.blockers.map((b) => b.text));
		}
		for (const [id, label] of Object.entries(s.expectedLabels))
			expect(body.rows.find((r) => r.identifier === id)?.stateLabel).toBe(label);
	});

	it('carries links, model version, proved numbers, evidence and open items', async () => {
		const body = await page('?limit=50');
		const by = Object.fromEntries(body.rows.map((r) => [r.identifier, r])) as Record<
			string,
			MatrixRow & { latestRun: NonNullable<MatrixRow['latestRun']> }
		>;
		const { r1, r2, r3, r4 } = s.reqs;
		expect(by[r1.identifier].children).toEqual([r2.identifier]);
		expect(by[r2.identifier].parents).toEqual([r1.identifier]);
		expect(by[r2.identifier].children).toEqual([r3.identifier, r4.identifier]);
		expect(by[r1.identifier].model).toMatchObject({ name: 'Yaw damper', version: 1, hash: s.v1.hash });
		// Popov, sector [0, 2], required margin 20 %: proved 3.125 against 2 x 1.2 = 2.4.
		expect(by[r1.identifier].latestRun.numbers).toMatchObject({
			proved: 3.125,
			certified: 3.125,
			required: 2.4
		});
		expect(by[r1.identifier].evidence).toEqual({ count: 1, accepted: 1, rejected: 0, unreviewed: 0 });
		expect(by[r4.identifier].evidence).toEqual({ count: 2, accepted: 0, rejected: 1, unreviewed: 1 });
		expect(by[r4.identifier].blockers.map((b) => b.kind)).toEqual([
			'placeholder',
			'rejected-evidence',
			'open-review'
		]);
		expect(by[r3.identifier].blockers.map((b) => b.kind)).toEqual(['pending-run']);
		// r1 names each derived requirement where the trouble starts, with a link target.
		expect(by[r1.identifier].blockers.map((b) => [b.kind, b.ref?.identifier])).toEqual([
			['child-not-verified', r2.identifier],
			['child-not-verified', r3.identifier],
			['child-not-verified', r4.identifier]
		]);
		expect(by[s.reqs.r6.identifier].latestRun.numbers.text).toBe('GM 12.5 dB (min 6), PM 60 deg (min 45)');
	});

	it('filters by state, level, method, owner and text, sorts and pages', async () => {
		const { r1, r2, r3, r4, r5, r6, r7 } = s.reqs;
		const ids = (b: { rows: { identifier: string }[] }) => b.rows.map((r) => r.identifier);
		expect(ids(await page('?state=not-proved,pending'))).toEqual([r2.identifier, r3.identifier]);
		expect(ids(await page('?level=system'))).toEqual([r1.identifier, r5.identifier]);
		expect(ids(await page('?method=test'))).toEqual([r1.identifier, r4.identifier, r5.identifier]);
		expect(ids(await page(`?owner=${s.team.users.engineer.id}`))).toEqual([r1.identifier, r2.identifier]);
		expect(ids(await page('?q=rudder'))).toEqual([r2.identifier]);
		expect(ids(await page('?q=TBD'))).toEqual([r4.identifier]);
		expect(ids(await page('?sort=identifier&dir=desc&limit=2'))).toEqual([r7.identifier, r6.identifier]);
		expect(ids(await page('?state=not-covered'))).toEqual([r7.identifier]);
		expect(ids(await page('?sort=state&limit=3'))).toEqual([r2.identifier, r1.identifier, r4.identifier]);
		expect(ids(await page('?state=verified&sort=state&dir=desc'))).toEqual([r6.identifier, r5.identifier]);
		const second = await page('?limit=2&offset=2');
		expect(ids(second)).toEqual([r3.identifier, r4.identifier]);
		expect(second.total).toBe(7);
	});

	it('refuses bad parameters with 400 naming the field', async () => {
		const res = await viewer.get(`${base()}/trace-matrix?state=green&limit=0`, {
			accept: 'application/json'
		});
		expect(res.status).toBe(400);
		const body = await res.json();
		expect(Object.keys(body.error.fields)).toEqual(expect.arrayContaining(['state.0', 'limit']));
	});

	it('streams every row as JSON lines with ?all=1', async () => {
		const res = await viewer.get(`${base()}/trace-matrix?all=1`, { accept: 'application/x-ndjson' });
		expect(res.status).toBe(200);
		const lines = (await res.text())
			.trim()
			.split('\n')
			.map((l) => JSON.parse(l));
		expect(lines[0]).toEqual({ total: 7, pending: 1 });
		expect(lines.slice(1).map((r) => r.identifier)).toEqual(Object.keys(s.expectedStates));
	});
});

const text = (v: ExcelJS.CellValue) => (v === null || v === undefined ? '' : String(v));

describe('spreadsheet export', () => {
	let wb: ExcelJS.Workbook;

	beforeAll(async () => {
		const res = await viewer.get(`${base()}/trace-matrix.xlsx`);
		expect(res.status).toBe(200);
		expect(res.headers.get('content-disposition')).toMatch(/^attachment; filename=".+\.xlsx"$/);
		wb = new ExcelJS.Workbook();
		await wb.xlsx.load(Buffer.from(await res.arrayBuffer()) as never);
	});

	function sheet(name: string) {
		const ws = wb.getWorksheet(name);
		expect(ws, name).toBeDefined();
		const rows: Record<string, ExcelJS.CellValue>[] = [];
		const header = (ws!.getRow(1).values as ExcelJS.CellValue[]).slice(1).map(text);
		ws!.eachRow((row, n) => {
			if (n === 1) return;
			const v = row.values as ExcelJS.CellValue[];
			rows.push(Object.fromEntries(header.map((h, i) => [h, v[i + 1] ?? null])));
		});
		return { ws: ws!, header, rows };
	}

	it('has the sheets, frozen headers and auto-filters', () => {
		expect(wb.worksheets.map((w) => w.name)).toEqual([
			'Cover',
			'Trace matrix',
			'Requirements',
			'Analyses',
			'Evidence',
			'Open items'
		]);
		for (const name of ['Trace matrix', 'Requirements', 'Analyses', 'Evidence', 'Open items']) {
			const ws = wb.getWorksheet(name)!;
			expect(ws.views[0]).toMatchObject({ state: 'frozen', ySplit: 1 });
			expect(ws.autoFilter).toBeTruthy();
		}
	});

	it('cover names the project, the exporter, no baseline and the caution', () => {
		const { rows } = sheet('Cover');
		const by = Object.fromEntries(rows.map((r) => [text(r.Item), text(r.Value)]));
		expect(by.Project).toBe(`${s.team.project.key} ${s.team.project.name}`);
		expect(by['Exported by']).toBe(s.team.users.viewer.email);
		expect(by.Baseline).toMatch(/^none/);
		expect(by['Engine version']).toBe(ENGINE_VERSION);
		expect(rows.some((r) => text(r.Value) === CAUTION_TEXT)).toBe(true);
		// The roll-up rule, in the words of the methods page (src/lib/verification ROLL_UP_RULE).
		for (const line of ROLL_UP_RULE)
			expect(
				rows.some((r) => text(r.Value) === line),
				line
			).toBe(true);
	});

	it('the matrix sheet equals the database', async () => {
		const db = testDb();
		const reqs = await db('requirements as r')
			.join('requirement_revisions as v', function () {
				this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
			})
			.leftJoin('users as u', 'u.id', 'v.owner_id')
			.where('r.project_id', s.team.project.id)
			.orderBy('r.number')
			.select(
				'r.id',
				'r.identifier',
				'v.title',
				'v.level',
				'v.assurance_level',
				'v.status',
				'v.methods',
				'u.display_name as owner'
			);
		const { rows } = sheet('Trace matrix');
		expect(rows.map((r) => r.Identifier)).toEqual(reqs.map((r) => r.identifier));
		for (const [i, r] of reqs.entries()) {
			const row = rows[i];
			expect(row.Title).toBe(r.title);
			expect(text(row.Level).toLowerCase()).toBe(r.level);
			expect(row['Assurance level']).toBe(r.assurance_level);
			expect(row.Status).toBe(r.status);
			expect(row['Verification methods']).toBe(r.methods.join(', '));
			expect(text(row.Owner)).toBe(r.owner ?? '');
			const parents = await db('requirement_links as l')
				.join('requirements as p', 'p.id', 'l.parent_id')
				.where({ 'l.child_id': r.id })
				.whereNull('l.removed_at')
				.orderBy('p.number')
				.pluck('p.identifier');
			expect(text(row['Derived from'])).toBe(parents.join(', '));
			// Specifications here track the latest version (none is pinned).
			const mv = await db('requirements as r')
				.join('stability_specs as s', 's.id', 'r.current_spec_id')
				.join('models as m', 'm.id', 's.model_id')
				.join('model_versions as mv', function () {
					this.on('mv.model_id', 'm.id').andOn('mv.version', 'm.latest_version');
				})
				.where('r.id', r.id)
				.first('m.name', 'mv.version', 'mv.content_hash');
			expect(text(row.Model)).toBe(mv?.name ?? '');
			expect(row['Model version'] ?? null).toBe(mv?.version ?? null);
			expect(text(row['Model SHA-256'])).toBe(mv?.content_hash ?? '');
			const ev = await db('evidence_links as el')
				.join('evidence_files as f', 'f.id', 'el.evidence_file_id')
				.leftJoin('evidence_reviews as er', 'er.evidence_file_id', 'f.id')
				.where('el.requirement_id', r.id)
				.select('er.decision');
			expect(row.Evidence).toBe(ev.length);
			expect(row['Accepted evidence']).toBe(ev.filter((e) => e.decision === 'accepted').length);
			const run = await db('analysis_runs')
				.where({ requirement_id: r.id })
				.whereIn('status', ['done', 'error'])
				.orderBy('finished_at', 'desc')
				.first();
			const words: Record<string, string> = {
				pass: 'pass',
				fail: 'not proved',
				inconclusive: 'inconclusive'
			};
			expect(text(row['Latest verdict'])).toBe(run ? words[run.verdict] : '');
		}
		const state = Object.fromEntries(rows.map((r) => [text(r.Identifier), text(r.State)]));
		expect(state[s.reqs.r1.identifier]).toBe('! Blocked');
		expect(state[s.reqs.r2.identifier]).toBe('✕ Not proved');
		expect(state[s.reqs.r3.identifier]).toBe('… Pending');
		expect(state[s.reqs.r5.identifier]).toBe('✓ Verified by test');
		const blockers = Object.fromEntries(rows.map((r) => [text(r.Identifier), text(r.Blockers)]));
		expect(blockers[s.reqs.r1.identifier]).toContain(
			`A derived requirement is not verified: ${s.reqs.r2.identifier}`
		);
		expect(rows.find((r) => r.Identifier === s.reqs.r1.identifier)).toMatchObject({
			Proved: 3.125,
			Required: 2.4
		});
	});

	it('the requirements sheet equals the revisions', async () => {
		const revs = await testDb()('requirements as r')
			.join('requirement_revisions as v', function () {
				this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
			})
			.where('r.project_id', s.team.project.id)
			.orderBy('r.number')
			.select('r.identifier', 'v.revision', 'v.title', 'v.statement', 'v.rationale', 'v.content_hash');
		const { rows } = sheet('Requirements');
		expect(rows.length).toBe(revs.length);
		for (const [i, v] of revs.entries()) {
			expect(rows[i]).toMatchObject({
				Identifier: v.identifier,
				Revision: v.revision,
				Title: v.title,
				Statement: v.statement,
				Rationale: v.rationale,
				'Revision SHA-256': v.content_hash
			});
		}
	});

	it('the analyses sheet equals the runs', async () => {
		const runs = await testDb()('analysis_runs as ar')
			.join('requirements as r', 'r.id', 'ar.requirement_id')
			.join('model_versions as mv', 'mv.id', 'ar.model_version_id')
			.where('ar.project_id', s.team.project.id)
			.where('ar.status', 'done')
			.orderBy('r.number')
			.select(
				'r.identifier',
				'ar.id',
				'ar.engine_version',
				'ar.worst_point',
				'ar.output_hash',
				'ar.verdict',
				'mv.content_hash',
				'mv.version',
				'ar.finished_at'
			);
		const { rows } = sheet('Analyses');
		expect(rows.map((r) => r.Identifier)).toEqual(runs.map((r) => r.identifier));
		for (const [i, r] of runs.entries()) {
			expect(rows[i]).toMatchObject({
				Run: Number(r.id),
				'Model version': r.version,
				'Model SHA-256': r.content_hash,
				'Engine version': r.engine_version,
				'Worst operating point': r.worst_point,
				'Output SHA-256': r.output_hash,
				'Finished (UTC)': new Date(r.finished_at).toISOString()
			});
		}
	});

	it('the evidence sheet equals the evidence files and reviews', async () => {
		const files = await testDb()('evidence as e')
			.join('evidence_files as f', function () {
				this.on('f.evidence_id', 'e.id').andOn('f.revision', 'e.current_revision');
			})
			.leftJoin('evidence_reviews as er', 'er.evidence_file_id', 'f.id')
			.where('e.project_id', s.team.project.id)
			.orderBy('e.id')
			.select(
				'e.id',
				'f.title',
				'f.original_name',
				'f.sha256',
				'f.size_bytes',
				'er.decision',
				'er.reviewer_label'
			);
		const { rows } = sheet('Evidence');
		expect(rows.length).toBe(files.length);
		for (const [i, f] of files.entries()) {
			expect(rows[i]).toMatchObject({
				Evidence: Number(f.id),
				Title: f.title,
				File: f.original_name,
				'SHA-256': f.sha256,
				'Size (bytes)': Number(f.size_bytes),
				'Review decision': f.decision ?? 'awaiting review'
			});
			expect(text(rows[i].Reviewer)).toBe(f.reviewer_label ?? '');
		}
	});

	it('the open items sheet lists each open item once', () => {
		const { rows } = sheet('Open items');
		const r4 = rows.filter((r) => r.Identifier === s.reqs.r4.identifier).map((r) => r['Open item']);
		expect(r4).toEqual([
			'The statement still holds the placeholder "TBD".',
			'One test evidence item was rejected.',
			'One test evidence item awaits review.'
		]);
	});

	it('records the export in the audit trail', async () => {
		const e = await testDb()('audit_events')
			.where({ project_id: s.team.project.id, action: 'trace.export' })
			.orderBy('seq', 'desc')
			.first();
		expect(e).toMatchObject({ actor_label: s.team.users.viewer.email, subject_type: 'project' });
		expect(e.after).toMatchObject({ format: 'xlsx', rows: 7 });
	});

	it('the CSV has the matrix sheet cells', async () => {
		const res = await viewer.get(`${base()}/trace-matrix.csv?level=system`);
		expect(res.status).toBe(200);
		const lines = (await res.text()).trimEnd().split('\r\n');
		const { header, rows } = sheet('Trace matrix');
		expect(lines[0]).toBe(header.join(','));
		expect(lines.length).toBe(3);
		const r1 = rows.find((r) => r.Identifier === s.reqs.r1.identifier)!;
		const csv = lines[1];
		expect(csv.startsWith(`${s.reqs.r1.identifier},${r1.Title},System,A,approved,"analysis, test"`)).toBe(
			true
		);
		expect(csv).toContain(String(r1['Model SHA-256']));
	});
});
