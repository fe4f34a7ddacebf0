import ExcelJS from 'exceljs';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ENGINE_VERSION } from '../../../src/lib/stability/index';
import {
	COMBINED_LOOK,
	blocksFreeze,
	verificationStates,
	type CombinedState,
	type EvidenceFact,
	type RequirementFacts
} from '../../../src/lib/verification/index';
import {
	addMember,
	closeTestDb,
	createEvidence,
	createModel,
	createModelVersion,
	createProject,
	createRequirement,
	createRun,
	createSpec,
	createTeam,
	linkRequirements,
	reviseRequirement,
	testDb
} from '../../factories';
import { signedIn, type Client } from '../../helpers/http';

// Issue 12: every surface gives the same state and the same blockers for every requirement. fast-check
// builds projects from generated combinations (methods, statement vs specification, placeholders,
// pinned or tracking model versions, runs of current and of earlier inputs or engines, evidence per
// method and review, derived-from trees, retired children) straight into PostgreSQL, then reads each
// requirement through the trace matrix (JSON page, JSON lines, CSV, XLSX), the requirement API, page and
// list (API and page), the evidence API, coverage, and a baseline (freeze check and manifest). The
// expected answer is the pure rule (src/lib/verification) applied to the facts the generator wrote,
// which also checks that the SQL inputs (model version in force, run of the current inputs) agree with
// what was built.

type RunKind =
	| 'none'
	| 'queued'
	| 'running'
	| 'error'
	| 'pass'
	| 'fail'
	| 'fail-na'
	| 'inconclusive'
	| 'old-engine'
	| 'old-revision';

interface ReqPlan {
	methods: ('analysis' | 'test' | 'inspection')[];
	statement: 'agrees' | 'disagrees' | 'TBD' | 'TBR' | 'TBS' | 'TBC' | 'TBA';
	spec: 'none' | 'latest' | 'pinned';
	run: RunKind;
	evidence: { method: 'test' | 'inspection'; review: 'accepted' | 'rejected' | null }[];
	parent: number | null;
	retired: boolean;
}

const reqPlan = (i: number) =>
	fc.record({
		methods: fc.subarray(['analysis', 'test', 'inspection'] as const, { minLength: 1 }),
		statement: fc.constantFrom('agrees', 'agrees', 'disagrees', 'TBD', 'TBR', 'TBS', 'TBC', 'TBA'),
		spec: fc.constantFrom('none', 'latest', 'latest', 'pinned'),
		run: fc.constantFrom<RunKind>(
			'none',
			'queued',
			'running',
			'error',
			'pass',
			'pass',
			'pass',
			'fail',
			'fail-na',
			'inconclusive',
			'old-engine',
			'old-revision'
		),
		evidence: fc.array(
			fc.record({
				method: fc.constantFrom('test', 'inspection'),
				review: fc.constantFrom('accepted', 'accepted', 'rejected', null)
			}),
			{ maxLength: 2 }
		),
		parent: i === 0 ? fc.constant(null) : fc.option(fc.nat({ max: i - 1 }), { nil: null }),
		retired: i === 0 ? fc.constant(false) : fc.integer({ min: 0, max: 9 }).map((n) => n < 2)
	}) as fc.Arbitrary<ReqPlan>;

const projectPlan = fc
	.integer({ min: 1, max: 6 })
	.chain((n) => fc.tuple(...Array.from({ length: n }, (_, i) => reqPlan(i))));

const SECTOR = '[0.5, 2]';
const statementOf = (p: ReqPlan) =>
	p.statement === 'agrees' || p.statement === 'disagrees'
		? `The loop shall remain absolutely stable for every gain in the sector ${SECTOR}.`
		: `The loop shall remain absolutely stable for every gain in the sector ${SECTOR} (${p.statement}).`;
const checkOf = (p: ReqPlan) => ({
	type: 'circle',
	sector: p.statement === 'disagrees' ? [0.5, 1.8] : [0.5, 2]
});
const NA = {
	precondition: 'the plant is Hurwitz, which the sector case k1 = 0 requires',
	remedy: 'A loop transformation makes it applicable.'
};

let team: Awaited<ReturnType<typeof createTeam>>;
let viewer: Client;
let certifier: Client;
beforeAll(async () => {
	team = await createTeam();
	viewer = await signedIn(team.users.viewer.email, team.users.viewer.password);
	certifier = await signedIn(team.users.certifier.email, team.users.certifier.password);
});
afterAll(closeTestDb);

interface Built {
	key: string;
	projectId: number;
	reqs: { id: number; identifier: string }[];
	expected: Map<number, ReturnType<typeof verificationStates> extends Map<number, infer V> ? V : never>;
}

async function build(plans: ReqPlan[]): Promise<Built> {
	const project = await createProject();
	await addMember(team.users.viewer.id, project.id, 'viewer');
	await addMember(team.users.certifier.id, project.id, 'certifier');
	const model = await createModel(project.id);
	const v1 = await createModelVersion(model.id);
	await createModelVersion(model.id, {
		operatingPoints: [{ label: 'nominal', model: { kind: 'tf', num: [2], den: [0.1, 1] } }]
	});
	const reqs: { id: number; identifier: string }[] = [];
	const facts: RequirementFacts[] = [];
	for (const [i, p] of plans.entries()) {
		const r = await createRequirement(project.id, {
			title: `Generated ${i}`,
			statement: statementOf(p),
			methods: p.methods,
			status: p.retired ? 'retired' : 'approved'
		});
		reqs.push({ id: r.id, identifier: r.identifier });
		if (p.parent !== null) await linkRequirements(r.id, reqs[p.parent].id);
		let spec: RequirementFacts['spec'] = null;
		let run: RequirementFacts['run'] = null;
		let latestEngineVersion: string | null = null;
		let pendingRuns = 0;
		if (p.spec !== 'none') {
			const s = await createSpec(r.id, {
				modelId: model.id,
				check: checkOf(p),
				modelVersionId: p.spec === 'pinned' ? v1.id : null
			});
			spec = { id: s.id, check: checkOf(p), requiredMargin: null };
			const finished = (verdict: 'pass' | 'fail' | 'inconclusive', result?: Record<string, unknown>) =>
				createRun(r.id, {
					engineVersion: ENGINE_VERSION,
					verdict,
					result: result ?? { verdict, numbers: {} }
				});
			switch (p.run) {
				case 'queued':
				case 'running': {
					const x = await createRun(r.id, { engineVersion: ENGINE_VERSION, status: p.run });
					run = { id: x.id, status: p.run, verdict: null };
					pendingRuns = 1;
					break;
				}
				case 'error': {
					const x = await createRun(r.id, { engineVersion: ENGINE_VERSION, status: 'error' });
					run = { id: x.id, status: 'error', verdict: null };
					latestEngineVersion = ENGINE_VERSION;
					break;
				}
				case 'pass':
				case 'fail':
				case 'inconclusive': {
					const x = await finished(p.run);
					run = { id: x.id, status: 'done', verdict: p.run };
					latestEngineVersion = ENGINE_VERSION;
					break;
				}
				case 'fail-na': {
					const x = await finished('fail', { verdict: 'fail', numbers: {}, notApplicable: NA });
					run = { id: x.id, status: 'done', verdict: 'fail', notApplicable: { ...NA, point: null } };
					latestEngineVersion = ENGINE_VERSION;
					break;
				}
				case 'old-engine':
					await createRun(r.id, { engineVersion: 'old-engine-0', verdict: 'pass' });
					latestEngineVersion = 'old-engine-0';
					break;
				case 'old-revision':
					// A run of the revision before this one: the current inputs have none.
					await finished('pass');
					await reviseRequirement(r.id, { rationale: 'Revised after the run.' });
					latestEngineVersion = ENGINE_VERSION;
					break;
			}
		}
		const evidence: EvidenceFact[] = [];
		for (const e of p.evidence) {
			await createEvidence(project.id, [r.id], {
				method: e.method,
				review: e.review ?? undefined,
				reviewer: team.users.certifier
			});
			evidence.push({ method: e.method, decision: e.review });
		}
		facts.push({
			id: r.id,
			identifier: r.identifier,
			status: p.retired ? 'retired' : 'approved',
			methods: p.methods,
			statement: statementOf(p),
			spec,
			modelVersionId: spec ? (p.spec === 'pinned' ? v1.id : -1) : null,
			run,
			pendingRuns,
			latestEngineVersion,
			evidence,
			children: []
		});
	}
	plans.forEach((p, i) => {
		if (p.parent !== null)
			facts[p.parent] = { ...facts[p.parent], children: [...facts[p.parent].children, facts[i].id] };
	});
	return {
		key: project.key,
		projectId: project.id,
		reqs,
		expected: verificationStates(facts, ENGINE_VERSION)
	};
}

type Seen = { state: string; blockers: string[] };
const seen = (state: string, blockers: { text: string }[]): Seen => ({
	state,
	blockers: blockers.map((b) => b.text)
});
const wordsOf = (st: CombinedState, label: string) => `${COMBINED_LOOK[st].symbol} ${label}`;

function parseCsv(text: string): string[][] {
	const rows: string[][] = [];
	let row: string[] = [];
	let cell = '';
	let quoted = false;
	for (let i = 0; i < text.length; i++) {
		const ch = text[i];
		if (quoted) {
			if (ch === '"' && text[i + 1] === '"') {
				cell += '"';
				i++;
			} else if (ch === '"') quoted = false;
			else cell += ch;
		} else if (ch === '"') quoted = true;
		else if (ch === ',') {
			row.push(cell);
			cell = '';
		} else if (ch === '\r' && text[i + 1] === '\n') {
			row.push(cell);
			rows.push(row);
			row = [];
			cell = '';
			i++;
		} else cell += ch;
	}
	return rows;
}

async function check(b: Built) {
	const base = `/api/v1/projects/${b.key}`;
	const want = (id: number) => b.expected.get(id)!;
	const expectSame = (surface: string, id: number, got: Seen) => {
		const w = want(id);
		expect(got, `${surface} ${b.reqs.find((r) => r.id === id)?.identifier}`).toEqual(
			seen(w.state, w.blockers)
		);
	};

	// Trace matrix: JSON page and JSON lines.
	const pageRes = await viewer.get(`${base}/trace-matrix?limit=1000`, { accept: 'application/json' });
	expect(pageRes.status).toBe(200);
	const page = (await pageRes.json()) as {
		rows: { id: number; state: string; stateLabel: string; blockers: { text: string }[] }[];
	};
	expect(page.rows.length).toBe(b.reqs.length);
	for (const r of page.rows) {
		expectSame('matrix page', r.id, seen(r.state, r.blockers));
		expect(r.stateLabel).toBe(want(r.id).label);
	}
	const lines = (await (await viewer.get(`${base}/trace-matrix?all=1`)).text())
		.trim()
		.split('\n')
		.slice(1)
		.map((l) => JSON.parse(l));
	for (const r of lines) expectSame('matrix JSON lines', r.id, seen(r.state, r.blockers));
	// Each state filter returns exactly the requirements in that state.
	for (const st of new Set([...b.expected.values()].map((v) => v.state))) {
		const f = await (
			await viewer.get(`${base}/trace-matrix?state=${st}&limit=1000`, { accept: 'application/json' })
		).json();
		expect(f.rows.map((r: { id: number }) => r.id).sort()).toEqual(
			[...b.expected]
				.filter(([, v]) => v.state === st)
				.map(([id]) => id)
				.sort()
		);
	}

	// CSV and XLSX: the state in words and the blockers' sentences.
	const csv = parseCsv(await (await viewer.get(`${base}/trace-matrix.csv`)).text());
	const [head, ...body] = csv;
	const col = (name: string) => head.indexOf(name);
	for (const row of body) {
		const r = b.reqs.find((x) => x.identifier === row[col('Identifier')])!;
		expect(row[col('State')], `CSV ${r.identifier}`).toBe(wordsOf(want(r.id).state, want(r.id).label));
		expect(row[col('Blockers')], `CSV ${r.identifier}`).toBe(
			want(r.id)
				.blockers.map((x) => x.text)
				.join(' ')
		);
	}
	const wb = new ExcelJS.Workbook();
	await wb.xlsx.load(
		Buffer.from(await (await viewer.get(`${base}/trace-matrix.xlsx`)).arrayBuffer()) as never
	);
	const ws = wb.getWorksheet('Trace matrix')!;
	const header = (ws.getRow(1).values as ExcelJS.CellValue[]).map((v) => String(v ?? ''));
	ws.eachRow((row, n) => {
		if (n === 1) return;
		const v = row.values as ExcelJS.CellValue[];
		const r = b.reqs.find((x) => x.identifier === v[header.indexOf('Identifier')])!;
		expect(String(v[header.indexOf('State')]), `XLSX ${r.identifier}`).toBe(
			wordsOf(want(r.id).state, want(r.id).label)
		);
		expect(String(v[header.indexOf('Blockers')] ?? ''), `XLSX ${r.identifier}`).toBe(
			want(r.id)
				.blockers.map((x) => x.text)
				.join(' ')
		);
	});
	const open: Record<string, string[]> = {};
	wb.getWorksheet('Open items')!.eachRow((row, n) => {
		if (n === 1) return;
		const v = row.values as ExcelJS.CellValue[];
		(open[String(v[1])] ??= []).push(String(v[3]));
	});
	for (const r of b.reqs)
		expect(open[r.identifier] ?? [], `XLSX open items ${r.identifier}`).toEqual(
			want(r.id).blockers.map((x) => x.text)
		);

	// Requirement list: API and page.
	const list = await (await viewer.get(`${base}/requirements`, { accept: 'application/json' })).json();
	for (const r of list.requirements)
		expectSame('requirement list API', r.id, seen(r.verification.state, r.verification.blockers));
	const listHtml = await (await viewer.get(`/p/${b.key}/requirements`, { accept: 'text/html' })).text();
	for (const m of listHtml.matchAll(/data-verification="([a-z-]+)" data-id="(\d+)"/g))
		expect(m[1], `requirement list page ${m[2]}`).toBe(want(Number(m[2])).state);
	expect([...listHtml.matchAll(/data-verification="/g)].length).toBe(list.requirements.length);

	// Each requirement: API, page, evidence API.
	for (const r of b.reqs) {
		const api = await (
			await viewer.get(`/api/v1/requirements/${r.id}`, { accept: 'application/json' })
		).json();
		expectSame(
			'requirement API',
			r.id,
			seen(api.requirement.verification.state, api.requirement.verification.blockers)
		);
		const html = await (await viewer.get(`/p/${b.key}/requirements/${r.id}`, { accept: 'text/html' })).text();
		expect(html.match(/data-verification="([a-z-]+)"/)?.[1], `requirement page ${r.identifier}`).toBe(
			want(r.id).state
		);
		expect(
			[...html.matchAll(/<li data-blocker="([a-z-]+)"/g)].map((m) => m[1]),
			`requirement page blockers ${r.identifier}`
		).toEqual(want(r.id).blockers.map((x) => x.kind));
		for (const x of want(r.id).blockers)
			if (x.ref) expect(html).toContain(`href="/p/${b.key}/requirements/${x.ref.id}"`);
		const ev = await (
			await viewer.get(`${base}/evidence?requirement=${r.id}`, { accept: 'application/json' })
		).json();
		expectSame('evidence API', r.id, seen(ev.requirement.state, ev.requirement.blockers));
	}

	// Coverage: each requirement counted once, in its state; how the verified ones are verified.
	const cov = await viewer.get(`/p/${b.key}/coverage`, { accept: 'text/html' });
	expect(cov.status).toBe(200);
	const covHtml = await cov.text();
	const point = await testDb()('coverage_snapshots')
		.where({ project_id: b.projectId })
		.orderBy('day', 'desc')
		.first();
	const retired = new Set(
		(
			await testDb()('requirements as r')
				.join('requirement_revisions as v', function () {
					this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
				})
				.where({ 'r.project_id': b.projectId, 'v.status': 'retired' })
				.pluck('r.id')
		).map(Number)
	);
	const expectedCounts: Record<string, number> = {};
	const how: Record<string, number> = { directly: 0, 'through-children': 0, both: 0 };
	for (const [id, v] of b.expected) {
		if (retired.has(id)) continue;
		expectedCounts[v.state] = (expectedCounts[v.state] ?? 0) + 1;
		if (v.how) how[v.how]++;
	}
	for (const st of Object.keys(COMBINED_LOOK))
		expect(point.counts.states[st] ?? 0, `coverage ${st}`).toBe(expectedCounts[st] ?? 0);
	for (const [h, n] of Object.entries(how))
		// Each way of being verified is a link to exactly its rows (coverage-drilldown.test.ts).
		expect(covHtml).toMatch(
			new RegExp(`<a class="tabular" data-how="${h}" href="[^"]+count=how.${h}">${n}</a>`)
		);

	// Baseline: the freeze check refuses exactly the requirements whose blockers refuse a freeze; a
	// frozen manifest holds the same states and blockers.
	const blockedIds = b.reqs
		.filter((r) => !retired.has(r.id) && want(r.id).blockers.some(blocksFreeze))
		.map((r) => r.identifier);
	const freeze = await certifier.json(`${base}/baselines`, 'POST', {
		label: 'generated',
		password: team.users.certifier.password
	});
	if (blockedIds.length) {
		expect(freeze.status).toBe(409);
		const err = (await freeze.json()).error;
		expect(err.blockers.map((x: { identifier: string }) => x.identifier)).toEqual(blockedIds);
		for (const x of err.blockers as { id: number; reasons: string[] }[])
			expect(x.reasons).toEqual(
				want(x.id)
					.blockers.filter(blocksFreeze)
					.map((y) => y.text)
			);
	} else {
		expect(freeze.status).toBe(201);
		const { id } = await freeze.json();
		const got = await (await viewer.get(`${base}/baselines/${id}`, { accept: 'application/json' })).json();
		for (const r of got.manifest.requirements)
			expectSame('baseline manifest', r.id, seen(r.state, r.blockers));
	}
}

const plan = (o: Partial<ReqPlan>): ReqPlan => ({
	methods: ['analysis'],
	statement: 'agrees',
	spec: 'latest',
	run: 'pass',
	evidence: [],
	parent: null,
	retired: false,
	...o
});
// Always tried besides the generated ones, so each state and each way of being verified occurs.
const EXAMPLES: ReqPlan[][] = [
	[
		plan({ methods: ['analysis', 'test'], spec: 'none', run: 'none' }),
		plan({ parent: 0 }),
		plan({ parent: 0, methods: ['test'], spec: 'none', evidence: [{ method: 'test', review: 'accepted' }] }),
		plan({ methods: ['analysis'], parent: null, spec: 'pinned', run: 'fail-na' }),
		plan({ statement: 'disagrees' }),
		plan({ methods: ['inspection'], spec: 'none', run: 'none' })
	],
	[
		plan({ methods: ['analysis'] }),
		plan({ parent: 0, run: 'fail' }),
		plan({ parent: 1, run: 'queued' }),
		plan({ parent: 0, statement: 'TBS', run: 'old-engine' }),
		plan({ methods: ['analysis'] }),
		plan({
			parent: 4,
			methods: ['inspection'],
			spec: 'none',
			evidence: [{ method: 'inspection', review: 'accepted' }]
		})
	]
];

describe('every surface gives the same state and blockers', () => {
	it('on generated projects', async () => {
		const states = new Set<string>();
		const hows = new Set<string>();
		await fc.assert(
			fc.asyncProperty(projectPlan, async (plans) => {
				const b = await build(plans);
				await check(b);
				for (const v of b.expected.values()) {
					states.add(v.state);
					if (v.how) hows.add(v.how);
				}
			}),
			{ numRuns: 12, endOnFailure: true, examples: EXAMPLES.map((e) => [e]) }
		);
		// The property was exercised on every state and every way of being verified.
		expect([...states].sort()).toEqual(Object.keys(COMBINED_LOOK).sort());
		expect([...hows].sort()).toEqual(['both', 'directly', 'through-children']);
	}, 600_000);
});
