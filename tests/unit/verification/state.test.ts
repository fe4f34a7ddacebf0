import { describe, expect, it } from 'vitest';
import { SPEC_TEMPLATES } from '../../../src/lib/requirements/templates';
import { qualityHints } from '../../../src/lib/requirements/quality';
import { runCheck } from '../../../src/lib/stability/index';
import {
	PLACEHOLDER_WORDS,
	ROLL_UP_RULE,
	analysisStateOf,
	blocksFreeze,
	placeholdersIn,
	verificationStates,
	type RequirementFacts
} from '../../../src/lib/verification/index';

// The one verification rule (src/lib/verification), case by case. Expected states follow by hand from
// the rule as issue 12 states it; the engine cases cite the theorem whose precondition fails.

const ENGINE = 'test-engine';
let next = 1;
function req(o: Partial<RequirementFacts> = {}): RequirementFacts {
	const id = o.id ?? next++;
	return {
		id,
		identifier: o.identifier ?? `R-${id}`,
		status: 'approved',
		methods: ['analysis'],
		statement: 'The loop shall remain absolutely stable for every gain in the sector [0.5, 2].',
		spec: { id: 100 + id, check: { type: 'circle', sector: [0.5, 2] }, requiredMargin: null },
		modelVersionId: 7,
		run: { id: 200 + id, status: 'done', verdict: 'pass' },
		pendingRuns: 0,
		latestEngineVersion: ENGINE,
		evidence: [],
		children: [],
		...o
	};
}
const evaluate = (facts: RequirementFacts[]) => verificationStates(facts, ENGINE);

describe('analysis state', () => {
	it('follows the run of the current inputs', () => {
		const s = (run: RequirementFacts['run'], specId: number | null = 1, mv: number | null = 1) =>
			analysisStateOf({ specId, modelVersionId: mv, run });
		expect(s(null, null)).toBe('not-analysed');
		expect(s(null, 1, null)).toBe('not-analysed');
		expect(s(null)).toBe('pending');
		expect(s({ id: 1, status: 'queued', verdict: null })).toBe('pending');
		expect(s({ id: 1, status: 'running', verdict: null })).toBe('pending');
		expect(s({ id: 1, status: 'error', verdict: null })).toBe('error');
		expect(s({ id: 1, status: 'done', verdict: 'pass' })).toBe('verified');
		expect(s({ id: 1, status: 'done', verdict: 'fail' })).toBe('not-proved');
		expect(s({ id: 1, status: 'done', verdict: 'inconclusive' })).toBe('inconclusive');
		const na = { precondition: 'the plant is Hurwitz', remedy: 'k1 > 0' };
		expect(s({ id: 1, status: 'done', verdict: 'fail', notApplicable: na })).toBe('not-applicable');
		// A pass is a pass whatever else the result says.
		expect(s({ id: 1, status: 'done', verdict: 'pass', notApplicable: na })).toBe('verified');
	});
});

describe('combined state', () => {
	it('verified by exactly the methods the requirement names', () => {
		const accepted = { method: 'test', decision: 'accepted' as const };
		const [a, b] = [
			req({ evidence: [accepted] }),
			req({ methods: ['analysis', 'test'], evidence: [accepted] })
		];
		const out = evaluate([a, b]);
		// Only analysis is named: the accepted test report is not claimed (issue 12, VX7-016).
		expect(out.get(a.id)).toMatchObject({
			state: 'verified',
			label: 'Verified by analysis',
			how: 'directly'
		});
		expect(out.get(a.id)?.evidence).toEqual({ test: 'accepted' });
		expect(out.get(b.id)).toMatchObject({ state: 'verified', label: 'Verified by analysis and test' });
	});

	it('a named method without accepted evidence is not covered; review and rejection block', () => {
		const missing = req({ methods: ['analysis', 'test'] });
		const open = req({
			methods: ['test'],
			spec: null,
			run: null,
			evidence: [{ method: 'test', decision: null }]
		});
		const rejected = req({
			methods: ['test'],
			spec: null,
			run: null,
			evidence: [{ method: 'test', decision: 'rejected' }]
		});
		const out = evaluate([missing, open, rejected]);
		expect(out.get(missing.id)?.state).toBe('not-covered');
		expect(out.get(missing.id)?.blockers.map((b) => b.kind)).toEqual(['no-evidence']);
		expect(out.get(open.id)?.state).toBe('pending');
		expect(out.get(open.id)?.blockers.map((b) => b.kind)).toEqual(['open-review']);
		expect(out.get(rejected.id)?.state).toBe('blocked');
		expect(out.get(rejected.id)?.blockers.map((b) => b.kind)).toEqual(['rejected-evidence', 'no-evidence']);
	});

	it('a statement that disagrees with its specification is never verified', () => {
		const r = req({ spec: { id: 1, check: { type: 'circle', sector: [0.5, 1.8] }, requiredMargin: null } });
		const s = evaluate([r]).get(r.id)!;
		expect(s.state).toBe('blocked');
		expect(s.blockers[0]).toMatchObject({ kind: 'disagreement' });
		expect(s.blockers[0].text).toContain('[0.5, 1.8]');
	});

	it('every placeholder the quality rules know blocks, and blocks a freeze', () => {
		for (const word of PLACEHOLDER_WORDS) {
			const r = req({
				statement: `The loop shall be stable for gains up to ${word}.`,
				spec: null,
				run: null
			});
			const s = evaluate([r]).get(r.id)!;
			expect(s.state, word).toBe('blocked');
			const p = s.blockers.find((b) => b.kind === 'placeholder')!;
			expect(p.text).toContain(`"${word}"`);
			expect(blocksFreeze(p)).toBe(true);
			// The quality hints find the same word with the same pattern.
			expect(
				qualityHints(r.statement).some((h) => h.rule === 'placeholder' && h.severity === 'blocker')
			).toBe(true);
		}
		expect(placeholdersIn('TBDs and ATBD are words, TBD is not')).toEqual([{ word: 'TBD', index: 25 }]);
	});

	it('not proved and criterion not applicable are distinct states and both block', () => {
		const np = req({ run: { id: 1, status: 'done', verdict: 'fail' } });
		const na = req({
			run: {
				id: 2,
				status: 'done',
				verdict: 'fail',
				notApplicable: {
					precondition: 'G is Hurwitz (required by the sector case k1 = 0)',
					remedy: 'Use k1 > 0.'
				}
			}
		});
		const out = evaluate([np, na]);
		expect(out.get(np.id)?.state).toBe('not-proved');
		expect(out.get(np.id)?.blockers[0].text).toContain('not a proof of instability');
		expect(out.get(na.id)).toMatchObject({ state: 'not-applicable', label: 'Criterion not applicable' });
		expect(out.get(na.id)?.blockers[0].text).toBe(
			'Criterion not applicable: its precondition "G is Hurwitz (required by the sector case k1 = 0)" does not hold; this is not a proof of instability. Use k1 > 0.'
		);
	});

	it('a run pending, or a verdict from an earlier engine, is pending and blocks a freeze', () => {
		const p = req({ run: null });
		const stale = req({ run: null, latestEngineVersion: 'old-engine' });
		const out = evaluate([p, stale]);
		expect(out.get(p.id)?.state).toBe('pending');
		expect(out.get(stale.id)?.blockers.map((b) => b.kind)).toEqual(['stale-engine']);
		expect(out.get(stale.id)?.blockers.every(blocksFreeze)).toBe(true);
	});
});

describe('roll-up through the requirement tree', () => {
	it('a parent without methods is verified through its children when all are verified', () => {
		const c1 = req();
		const c2 = req({
			methods: ['test'],
			spec: null,
			run: null,
			evidence: [{ method: 'test', decision: 'accepted' }]
		});
		const parent = req({ methods: [], spec: null, run: null, children: [c1.id, c2.id] });
		const top = req({ methods: ['analysis'], children: [parent.id] });
		const out = evaluate([top, parent, c1, c2]);
		expect(out.get(parent.id)).toMatchObject({
			state: 'verified',
			how: 'through-children',
			label: 'Verified through derived requirements'
		});
		expect(out.get(top.id)).toMatchObject({
			state: 'verified',
			how: 'both',
			label: 'Verified by analysis and through derived requirements'
		});
	});

	it('a parent leaves the methods it has nothing of its own for to its children', () => {
		const c = req();
		// Analysis and test named, no specification or evidence of its own: covered through c.
		const leaves = req({ methods: ['analysis', 'test'], spec: null, run: null, children: [c.id] });
		// Its own analysis did not prove it: that blocks, whatever the children say.
		const own = req({
			methods: ['analysis'],
			run: { id: 5, status: 'done', verdict: 'fail' },
			children: [c.id]
		});
		// Its own test evidence awaits review: pending.
		const review = req({
			methods: ['analysis', 'test'],
			evidence: [{ method: 'test', decision: null }],
			children: [c.id]
		});
		const out = evaluate([leaves, own, review, c]);
		expect(out.get(leaves.id)).toMatchObject({
			state: 'verified',
			how: 'through-children',
			label: 'Verified through derived requirements'
		});
		expect(out.get(own.id)?.state).toBe('not-proved');
		expect(out.get(review.id)?.state).toBe('pending');
	});

	it('a child not proved shows on every ancestor, naming it', () => {
		const leaf = req({ identifier: 'VX7-040', run: { id: 9, status: 'done', verdict: 'fail' } });
		const mid = req({ methods: [], spec: null, run: null, children: [leaf.id] });
		const top = req({ methods: [], spec: null, run: null, children: [mid.id] });
		const out = evaluate([top, mid, leaf]);
		for (const a of [mid, top]) {
			const s = out.get(a.id)!;
			expect(s.state).toBe('blocked');
			expect(s.blockers).toEqual([
				{
					kind: 'child-not-verified',
					weight: 'blocked',
					text: 'A derived requirement is not verified: VX7-040 (Not proved).',
					ref: { id: leaf.id, identifier: 'VX7-040', state: 'not-proved' }
				}
			]);
		}
	});

	it('retired children do not count; a pending child makes its parent pending', () => {
		const retired = req({ status: 'retired', run: { id: 3, status: 'done', verdict: 'fail' } });
		const waiting = req({ run: null });
		const p1 = req({ methods: [], spec: null, run: null, children: [retired.id] });
		const p2 = req({ methods: [], spec: null, run: null, children: [waiting.id] });
		const out = evaluate([p1, p2, retired, waiting]);
		// With its only child retired, p1 has nothing derived and names no method.
		expect(out.get(p1.id)?.blockers.map((b) => b.kind)).toEqual(['no-method']);
		expect(out.get(p2.id)?.state).toBe('pending');
	});
});

describe('engine marks failed preconditions (criterion not applicable)', () => {
	it('integrator plant, sector case k1 = 0: the plant is not Hurwitz (Khalil, 3rd ed., Theorem 7.1)', () => {
		// G(s) = 1/(s (s + 1)) has a pole at s = 0, so it is not Hurwitz: the k1 = 0 case of the circle
		// criterion requires a Hurwitz G.
		const r = runCheck({ kind: 'tf', num: [1], den: [1, 1, 0] }, { type: 'circle', sector: [0, 2] });
		expect(r.verdict).toBe('fail');
		expect(r.notApplicable?.precondition).toMatch(/Hurwitz.*k1 = 0/);
		expect(r.notApplicable?.remedy).toMatch(/k1 > 0/);
	});

	it('the condition violated, not a precondition: a stable plant entering the half-plane', () => {
		// G(s) = 1/(s + 1)^3: Re G(jw) = (1 - 3x)/(1 + x)^3 with x = w^2, whose derivative
		// 6(x - 1)/(1 + x)^4 vanishes at x = 1: min Re G = -1/4 (own derivation). G is Hurwitz, so the
		// sector [0, 10] (Re G > -0.1 needed) fails on the criterion's condition itself.
		const r = runCheck({ kind: 'tf', num: [1], den: [1, 3, 3, 1] }, { type: 'circle', sector: [0, 10] });
		expect(r.verdict).toBe('fail');
		expect(r.notApplicable).toBeUndefined();
	});

	it('Popov on a plant that is not Hurwitz (Khalil, 3rd ed., Theorem 7.3 requires it)', () => {
		const r = runCheck({ kind: 'tf', num: [1], den: [1, 1, 0] }, { type: 'popov', sector: [0, 2] });
		expect(r.notApplicable?.precondition).toMatch(/Hurwitz.*Popov/);
	});
});

describe('words cite published sources', () => {
	it('no template or rule text names a file that is not in the product', () => {
		for (const t of SPEC_TEMPLATES) expect(`${t.label} ${t.explanation}`).not.toMatch(/DOMAIN|\.md\b/);
		for (const line of ROLL_UP_RULE) expect(line).not.toMatch(/DOMAIN|\.md\b/);
	});
});
