// What each count of the coverage dashboard counts, as one predicate per count: the dashboard counts
// with it and the trace matrix filters with it (the `count` parameter), so a count's link opens exactly
// the rows it counted. Pure: the server and the browser import it.
import {
	BLOCKER_KINDS,
	BLOCKER_LABELS,
	COMBINED_LOOK,
	HOW_LABELS,
	COMBINED_STATES,
	HOW_VERIFIED,
	type BlockerKind,
	type CombinedState,
	type HowVerified
} from './state';

/** The part of a matrix row a coverage count looks at. */
export interface CountedRow {
	status: string;
	state: CombinedState;
	how: HowVerified | null;
	blockers: readonly { kind: BlockerKind }[];
}

export type CoverageCount = `state.${CombinedState}` | `how.${HowVerified}` | `blocker.${BlockerKind}`;

export const COVERAGE_COUNTS: readonly CoverageCount[] = [
	...COMBINED_STATES.map((s) => `state.${s}` as const),
	...HOW_VERIFIED.map((h) => `how.${h}` as const),
	...BLOCKER_KINDS.map((k) => `blocker.${k}` as const)
];

/** Retired requirements are in no count. */
export const isCounted = (r: { status: string }) => r.status !== 'retired';

/** Whether a row is in a count: in a state, verified in a way, or having a blocker of a kind. */
export function inCount(count: CoverageCount, r: CountedRow): boolean {
	if (!isCounted(r)) return false;
	const dot = count.indexOf('.');
	const what = count.slice(0, dot);
	const value = count.slice(dot + 1);
	if (what === 'state') return r.state === value;
	if (what === 'how') return r.how === value;
	return r.blockers.some((b) => b.kind === value);
}

/** The trace-matrix address of a count (optionally within a level or an assurance level). */
export function countHref(
	projectKey: string,
	count: CoverageCount,
	within: { level?: string; assurance?: string } = {}
): string {
	const p = new URLSearchParams({ count });
	if (within.level) p.set('level', within.level);
	if (within.assurance) p.set('assurance', within.assurance);
	return `/p/${projectKey}/trace?${p}`;
}

/** A count in words, for the matrix's filter line and the export's cover sheet. */
export function countWords(count: CoverageCount): string {
	const dot = count.indexOf('.');
	const what = count.slice(0, dot);
	const value = count.slice(dot + 1);
	if (what === 'state') return `State: ${COMBINED_LOOK[value as CombinedState].label}`;
	if (what === 'how') return `Verified ${HOW_LABELS[value as HowVerified]}`;
	return `Blocker: ${BLOCKER_LABELS[value as BlockerKind]}`;
}
