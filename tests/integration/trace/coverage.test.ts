import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTestDb, testDb } from '../../factories';
import { signedIn } from '../../helpers/http';
import { buildScenario } from './scenario';

// The coverage dashboard counts each requirement once, in the state scenario.ts builds it into, and
// records today's point of the trend when it is shown.

let s: Awaited<ReturnType<typeof buildScenario>>;
beforeAll(async () => {
	s = await buildScenario();
});
afterAll(closeTestDb);

describe('coverage dashboard', () => {
	it('shows the counts per state to a viewer and records them as the point of today', async () => {
		const viewer = await signedIn(s.team.users.viewer.email, s.team.users.viewer.password);
		const res = await viewer.get(`/p/${s.team.project.key}/coverage`, { accept: 'text/html' });
		expect(res.status).toBe(200);
		const html = await res.text();
		const expected: Record<string, number> = {};
		for (const st of Object.values(s.expectedStates)) expected[st] = (expected[st] ?? 0) + 1;
		const verified = expected.verified ?? 0;
		expect(html).toContain(`${verified} of 7</span>`);
		// r5 and r6 are verified by their own methods; none through derived requirements here.
		expect(html).toMatch(new RegExp(`data-how="directly"[^>]*>${verified}</a>`));
		// Drill-down: each state's count links to the matrix filtered by that count (coverage-drilldown.test.ts).
		expect(html).toContain(`href="/p/${s.team.project.key}/trace?count=state.not-proved"`);
		expect(html).toContain('Results support engineering judgement');
		const point = await testDb()('coverage_snapshots').where({ project_id: s.team.project.id }).first();
		expect(point.counts.total).toBe(7);
		for (const [state, n] of Object.entries(expected)) expect(point.counts.states[state], state).toBe(n);
		const zero = Object.entries(point.counts.states).filter(([st]) => !(st in expected));
		for (const [, n] of zero) expect(n).toBe(0);
	});

	it('outsiders are refused', async () => {
		const out = await signedIn(s.team.users.outsider.email, s.team.users.outsider.password);
		const res = await out.get(`/p/${s.team.project.key}/coverage`, { accept: 'text/html' });
		expect(res.status).toBe(403);
	});
});
