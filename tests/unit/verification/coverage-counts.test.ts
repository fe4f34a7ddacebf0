import { describe, expect, it } from 'vitest';
import { COVERAGE_COUNTS, countHref, countWords, inCount } from '../../../src/lib/verification/index';

// The one definition of what each coverage count counts (issue 13), case by case by hand.
const row = (o: Partial<Parameters<typeof inCount>[1]> = {}) => ({
	status: 'approved',
	state: 'blocked' as const,
	how: null,
	blockers: [{ kind: 'rejected-evidence' as const }, { kind: 'open-review' as const }],
	...o
});

describe('coverage counts', () => {
	it('a row is in its state, its way of being verified and each of its blockers', () => {
		expect(inCount('state.blocked', row())).toBe(true);
		expect(inCount('state.verified', row())).toBe(false);
		expect(inCount('blocker.rejected-evidence', row())).toBe(true);
		expect(inCount('blocker.open-review', row())).toBe(true);
		expect(inCount('blocker.no-evidence', row())).toBe(false);
		const v = row({ state: 'verified', how: 'through-children', blockers: [] });
		expect(inCount('how.through-children', v)).toBe(true);
		expect(inCount('how.directly', v)).toBe(false);
	});
	it('a retired requirement is in no count', () => {
		const r = row({ status: 'retired' });
		expect(COVERAGE_COUNTS.filter((c) => inCount(c, r))).toEqual([]);
	});
	it('every state, way and blocker kind is a count, with words and a matrix address', () => {
		expect(COVERAGE_COUNTS).toContain('state.not-covered');
		expect(COVERAGE_COUNTS).toContain('how.both');
		expect(COVERAGE_COUNTS).toContain('blocker.child-not-verified');
		expect(countWords('blocker.open-review')).toBe('Blocker: Evidence awaiting review');
		expect(countHref('VX7', 'state.verified', { level: 'loop' })).toBe(
			'/p/VX7/trace?count=state.verified&level=loop'
		);
	});
});
