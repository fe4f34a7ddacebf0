import { describe, expect, it } from 'vitest';
import { filterRows, matrixLines, shownWords, sortRows } from '../../../src/lib/trace/view';
import type { MatrixRow } from '../../../src/lib/server/trace/service';

// The matrix page's view rules on hand-made rows: what is counted as shown, and the order of groups.
function row(n: number, parents: string[] = [], extra: Partial<MatrixRow> = {}): MatrixRow {
	return {
		id: 100 + n,
		identifier: `VX7-${n}`,
		revision: 1,
		title: `Requirement ${n}`,
		level: parents.length ? 'subsystem' : 'system',
		assuranceLevel: 'B',
		status: 'approved',
		methods: ['analysis'],
		owner: null,
		parents,
		children: [],
		model: null,
		analysisState: 'not-analysed',
		latestRun: null,
		pendingRuns: 0,
		evidence: { count: 0, accepted: 0, rejected: 0, unreviewed: 0 },
		state: 'not-covered',
		stateLabel: 'Not covered',
		stateSymbol: '○',
		how: null,
		blockers: [],
		lastChange: '2026-12-01T10:00:00Z',
		...extra
	};
}

const rows = [row(10, ['VX7-2']), row(1), row(3, ['VX7-10']), row(2), row(11, ['VX7-2']), row(4, ['VX7-10'])];

describe('trace matrix view', () => {
	it('puts rows in natural identifier order by default', () => {
		expect(sortRows(rows, null).map((r) => r.identifier)).toEqual([
			'VX7-1',
			'VX7-2',
			'VX7-3',
			'VX7-4',
			'VX7-10',
			'VX7-11'
		]);
	});

	it('orders the groups: top level first, then by parent in natural order (VX7-2 before VX7-10)', () => {
		const v = matrixLines(sortRows(rows, null), true);
		const groups = v.lines.filter((l) => l.kind === 'group').map((l) => (l.kind === 'group' ? l.key : ''));
		expect(groups).toEqual(['', 'VX7-2', 'VX7-10']);
		expect(v).toMatchObject({ matching: 6, rowsShown: 6, groups: 3, openGroups: 3 });
	});

	it('with every group collapsed, counts the groups and the requirements instead of "0 of 6"', () => {
		const v = matrixLines(sortRows(rows, null), true, new Set(['', 'VX7-2', 'VX7-10']));
		expect(v.lines.every((l) => l.kind === 'group')).toBe(true);
		expect(v).toMatchObject({ matching: 6, rowsShown: 0, groups: 3, openGroups: 0 });
		expect(shownWords(v, 6)).toBe('6 requirements of 6 in 3 groups (all collapsed); showing 0 of them.');
	});

	it('one group open: its rows are the ones counted as shown', () => {
		const v = matrixLines(sortRows(rows, null), true, new Set(['', 'VX7-10']));
		expect(
			v.lines.filter((l) => l.kind === 'row').map((l) => (l.kind === 'row' ? l.row.identifier : ''))
		).toEqual(['VX7-10', 'VX7-11']);
		expect(shownWords(v, 6)).toBe('6 requirements of 6 in 3 groups (1 open); showing 2 of them.');
	});

	it('ungrouped and filtered: "Showing n of total"', () => {
		const f = filterRows(rows, { level: 'system' });
		expect(shownWords(matrixLines(f, false), rows.length)).toBe('Showing 2 of 6 requirements.');
		expect(
			filterRows(rows, { q: 'vx7-1' })
				.map((r) => r.identifier)
				.sort()
		).toEqual(['VX7-1', 'VX7-10', 'VX7-11']);
	});

	it('sorts by state worst first, ties in identifier order', () => {
		const mixed = [
			row(2, [], { state: 'verified' }),
			row(10, [], { state: 'not-proved' }),
			row(9, [], { state: 'not-proved' })
		];
		expect(sortRows(mixed, { column: 'state', desc: false }).map((r) => r.identifier)).toEqual([
			'VX7-9',
			'VX7-10',
			'VX7-2'
		]);
	});
});
