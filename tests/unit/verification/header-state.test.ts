import { describe, expect, it } from 'vitest';
import {
	analysisAddsToState,
	verificationStates,
	type RequirementFacts
} from '../../../src/lib/verification/index';

// Issue 13: the requirement header showed "Verified by analysis" twice (the verification state and the
// analysis state). The header shows the analysis badge only where it adds to the state's words.
const ENGINE = 'test-engine';
function req(o: Partial<RequirementFacts>): RequirementFacts {
	return {
		id: 1,
		identifier: 'R-1',
		status: 'approved',
		methods: ['analysis'],
		statement: 'The loop shall remain absolutely stable for every gain in the sector [0.5, 2].',
		spec: { id: 101, check: { type: 'circle', sector: [0.5, 2] }, requiredMargin: null },
		modelVersionId: 7,
		run: { id: 201, status: 'done', verdict: 'pass' },
		pendingRuns: 0,
		latestEngineVersion: ENGINE,
		evidence: [],
		children: [],
		...o
	};
}
const stateOf = (f: RequirementFacts) => verificationStates([f], ENGINE).get(f.id)!;

describe('analysisAddsToState (requirement header)', () => {
	it('a requirement verified by analysis shows its state once', () => {
		const v = stateOf(req({}));
		expect(v.label).toBe('Verified by analysis');
		expect(v.analysis).toBe('verified');
		expect(analysisAddsToState(v, v.analysis)).toBe(false);
	});
	it('a failed analysis that makes the state "Not proved" is not repeated', () => {
		const v = stateOf(req({ run: { id: 201, status: 'done', verdict: 'fail' } }));
		expect(v.state).toBe('not-proved');
		expect(analysisAddsToState(v, v.analysis)).toBe(false);
	});
	it('a pending run beside a pending state is not repeated', () => {
		const v = stateOf(req({ run: null, pendingRuns: 1 }));
		expect(v.state).toBe('pending');
		expect(analysisAddsToState(v, 'pending')).toBe(false);
	});
	it('the analysis badge stays where it says more than the state', () => {
		// Verified by test only: a passing analysis of a requirement that does not name analysis adds to it.
		expect(analysisAddsToState({ state: 'verified', label: 'Verified by test' }, 'verified')).toBe(true);
		// Blocked by rejected evidence while the analysis proved it: both facts matter.
		expect(analysisAddsToState({ state: 'blocked', label: 'Blocked' }, 'verified')).toBe(true);
		expect(analysisAddsToState({ state: 'not-covered', label: 'Not covered' }, 'not-analysed')).toBe(true);
		expect(analysisAddsToState({ state: 'blocked', label: 'Blocked' }, 'inconclusive')).toBe(true);
	});
});
