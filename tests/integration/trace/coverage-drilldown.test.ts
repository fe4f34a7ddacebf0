import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { coverage } from '../../../src/lib/server/coverage/service';
import { closeTestDb, createEvidence, createRequirement } from '../../factories';
import { signedIn, type Client } from '../../helpers/http';
import { buildScenario } from './scenario';

// Issue 13: every count of the coverage dashboard links to the trace matrix, and the matrix opened by
// the link has exactly that many rows (the count and the filter are one predicate,
// src/lib/verification/coverage.ts). Checked on the scenario's project (each requirement built by hand
// into its state, scenario.ts) plus a retired requirement with rejected evidence, which no count holds.

let s: Awaited<ReturnType<typeof buildScenario>>;
let viewer: Client;
let retired: { id: number; identifier: string };
beforeAll(async () => {
	s = await buildScenario();
	viewer = await signedIn(s.team.users.viewer.email, s.team.users.viewer.password);
	retired = await createRequirement(s.team.project.id, {
		title: 'Withdrawn rig check',
		methods: ['test'],
		status: 'retired'
	});
	await createEvidence(s.team.project.id, [retired.id], { title: 'Old sweep', review: 'rejected' });
});
afterAll(closeTestDb);

interface Row {
	identifier: string;
	state: string;
	status: string;
	blockers: { kind: string }[];
}

async function matrixRows(query: string): Promise<Row[]> {
	const res = await viewer.get(`/api/v1/projects/${s.team.project.key}/trace-matrix?all=1&${query}`, {
		accept: 'application/x-ndjson'
	});
	expect(res.status, query).toBe(200);
	const lines = (await res.text()).split('\n').filter((l) => l.trim());
	return lines.slice(1).map((l) => JSON.parse(l));
}

describe('coverage drill-downs open exactly the rows they count', () => {
	it('every count on the page links to a matrix of that many rows', async () => {
		const key = s.team.project.key;
		const html = await (await viewer.get(`/p/${key}/coverage`, { accept: 'text/html' })).text();
		const c = await coverage(s.team.project.id);
		const links = [...html.matchAll(/href="\/p\/[A-Z0-9]+\/trace\?([^"]+)"/g)].map((m) =>
			m[1].replace(/&amp;/g, '&')
		);
		const expectedOf = (p: URLSearchParams): number => {
			const [what, value] = p.get('count')!.split('.');
			if (what === 'how') return c.how[value as keyof typeof c.how];
			if (what === 'blocker') return c.blocking[value as keyof typeof c.blocking];
			const level = p.get('level');
			const assurance = p.get('assurance');
			if (level) return c.byLevel.find((g) => g.key === level)!.states[value as 'verified'];
			if (assurance) return c.byAssurance.find((g) => g.key === assurance)!.states[value as 'verified'];
			return c.states[value as 'verified'];
		};
		const seen = new Set<string>();
		for (const q of links) {
			const p = new URLSearchParams(q);
			expect(p.get('count'), `link ${q} names a count`).toBeTruthy();
			if (seen.has(q)) continue;
			seen.add(q);
			const rows = await matrixRows(q);
			expect(rows.length, `rows of ${q}`).toBe(expectedOf(p));
			expect(
				rows.some((r) => r.identifier === retired.identifier),
				`${q} leaves the retired one out`
			).toBe(false);
		}
		// Every state card, every way of being verified and every blocker listed has its link.
		for (const st of Object.keys(c.states)) expect(seen.has(`count=state.${st}`), st).toBe(true);
		for (const h of Object.keys(c.how)) expect(seen.has(`count=how.${h}`), h).toBe(true);
		for (const [k, n] of Object.entries(c.blocking))
			if (n > 0) expect(seen.has(`count=blocker.${k}`), k).toBe(true);
		expect(seen.size).toBeGreaterThan(15);
	});

	it('the blocker counts are the requirements the scenario built with that blocker', async () => {
		const { r4 } = s.reqs;
		// r4 has rejected evidence and evidence awaiting review (scenario.ts); the retired one is not counted.
		const rejected = await matrixRows('count=blocker.rejected-evidence');
		expect(rejected.map((r) => r.identifier)).toEqual([r4.identifier]);
		const open = await matrixRows('count=blocker.open-review');
		expect(open.map((r) => r.identifier)).toContain(r4.identifier);
		for (const r of open) expect(r.blockers.map((b) => b.kind)).toContain('open-review');
		// "Method named but no accepted evidence": never a verified row (the old link opened method=test).
		const noEvidence = await matrixRows('count=blocker.no-evidence');
		for (const r of noEvidence) {
			expect(r.state).not.toBe('verified');
			expect(r.blockers.map((b) => b.kind)).toContain('no-evidence');
		}
		// Unfiltered, the retired requirement is in the matrix; in a count it is not.
		expect((await matrixRows('')).some((r) => r.identifier === retired.identifier)).toBe(true);
	});

	it('an unknown count is refused with the parameter named', async () => {
		const res = await viewer.get(`/api/v1/projects/${s.team.project.key}/trace-matrix?count=state.nice`, {
			accept: 'application/json'
		});
		expect(res.status).toBe(400);
		expect((await res.json()).error.fields).toHaveProperty('count');
	});
});
