import {
	BLOCKER_KINDS,
	COMBINED_STATES,
	HOW_VERIFIED,
	type BlockerKind,
	inCount,
	isCounted,
	type CombinedState,
	type CoverageCount,
	type HowVerified
} from '../../verification/index';
import { ASSURANCE_LEVELS, LEVELS } from '../../requirements/vocabulary';
import { db } from '../db';
import { matrixAll, type MatrixRow } from '../trace/service';
import { points, upsertToday, type CoveragePoint } from './repo';

// The coverage dashboard: how many requirements are in each verification state (each requirement
// counted once, src/lib/verification), how the verified ones are verified (directly, through their
// derived requirements, both), by level and by assurance level, what blocks verification, and a daily
// trend. Today's point is written whenever the dashboard
// is computed (page load), so the trend grows from the days someone looked; retired requirements are
// left out of every count.

export type StateCounts = Record<CombinedState, number>;

export interface Coverage {
	total: number;
	states: StateCounts;
	byLevel: { key: string; total: number; states: StateCounts }[];
	byAssurance: { key: string; total: number; states: StateCounts }[];
	/** Verified requirements by how they are verified. */
	how: Record<HowVerified, number>;
	/** How many requirements have each kind of blocker. */
	blocking: Record<BlockerKind, number>;
	trend: CoveragePoint[];
}

const zero = (): StateCounts => Object.fromEntries(COMBINED_STATES.map((s) => [s, 0])) as StateCounts;

function groupBy(rows: MatrixRow[], key: (r: MatrixRow) => string, order: readonly string[]) {
	const m = new Map<string, { key: string; total: number; states: StateCounts }>(
		order.map((k) => [k, { key: k, total: 0, states: zero() }])
	);
	for (const r of rows) {
		const k = key(r);
		if (!m.has(k)) m.set(k, { key: k, total: 0, states: zero() });
		const g = m.get(k)!;
		g.total++;
		for (const s of COMBINED_STATES) if (inCount(`state.${s}`, r)) g.states[s]++;
	}
	return [...m.values()];
}

export function coverageOf(all: MatrixRow[]): Omit<Coverage, 'trend'> {
	// Every count is a count of inCount (src/lib/verification/coverage.ts), the predicate the trace
	// matrix filters with (its `count` parameter): a count's link opens exactly its rows.
	const rows = all.filter(isCounted);
	const n = (count: CoverageCount, within: MatrixRow[] = rows) => within.filter((r) => inCount(count, r)).length;
	const states = Object.fromEntries(COMBINED_STATES.map((s) => [s, n(`state.${s}`)])) as StateCounts;
	return {
		total: rows.length,
		states,
		byLevel: groupBy(rows, (r) => r.level, LEVELS),
		byAssurance: groupBy(rows, (r) => r.assuranceLevel, ASSURANCE_LEVELS),
		how: Object.fromEntries(HOW_VERIFIED.map((h) => [h, n(`how.${h}`)])) as Record<HowVerified, number>,
		blocking: Object.fromEntries(BLOCKER_KINDS.map((k) => [k, n(`blocker.${k}`)])) as Record<
			BlockerKind,
			number
		>
	};
}

export async function coverage(projectId: number, days = 90): Promise<Coverage> {
	const rows = await matrixAll(projectId, { sort: 'identifier', dir: 'asc', limit: 100, offset: 0 });
	const c = coverageOf(rows);
	await upsertToday(db(), projectId, { total: c.total, states: c.states });
	return { ...c, trend: await points(db(), projectId, days) };
}
