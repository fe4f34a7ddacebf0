import { compareIdentifiers } from '../requirements/order';
import { LEVEL_LABELS, STATE_ORDER } from '../verification/index';
import type { MatrixRow } from '../server/trace/service';
import type { MatrixColumn } from './columns';

// What the trace matrix page shows of the rows it has: the filters, the sort and the grouping by
// parent, as pure functions (the page only wires them to its controls). Identifiers and group names
// are in natural order (src/lib/requirements/order.ts).

export interface MatrixFilters {
	state?: string;
	level?: string;
	assurance?: string;
	method?: string;
	owner?: string;
	/** Part of the identifier or title, any case. */
	q?: string;
}

export function filterRows(rows: readonly MatrixRow[], f: MatrixFilters): MatrixRow[] {
	const q = f.q?.trim().toLowerCase() ?? '';
	return rows.filter(
		(r) =>
			(!f.state || r.state === f.state) &&
			(!f.level || r.level === f.level) &&
			(!f.assurance || r.assuranceLevel === f.assurance) &&
			(!f.method || r.methods.includes(f.method)) &&
			(!f.owner || String(r.owner?.id ?? '') === f.owner) &&
			(!q || r.identifier.toLowerCase().includes(q) || r.title.toLowerCase().includes(q))
	);
}

export interface MatrixSort {
	column: MatrixColumn;
	desc: boolean;
}

const LEVEL_RANK = Object.keys(LEVEL_LABELS);
const rank = (list: readonly string[], v: string) => {
	const i = list.indexOf(v);
	return i < 0 ? list.length : i;
};

/** How a column sorts: ranks for state and level, numbers for counts, natural order for text. */
function compareBy(column: MatrixColumn): (a: MatrixRow, b: MatrixRow) => number {
	const text = (f: (r: MatrixRow) => string) => (a: MatrixRow, b: MatrixRow) =>
		compareIdentifiers(f(a), f(b));
	switch (column) {
		case 'identifier':
			return text((r) => r.identifier);
		case 'state':
			return (a, b) => rank(STATE_ORDER, a.state) - rank(STATE_ORDER, b.state);
		case 'level':
			return (a, b) => rank(LEVEL_RANK, a.level) - rank(LEVEL_RANK, b.level);
		case 'blockers':
			return (a, b) => a.blockers.length - b.blockers.length;
		case 'evidence':
			return (a, b) => a.evidence.accepted - b.evidence.accepted || a.evidence.count - b.evidence.count;
		case 'title':
			return text((r) => r.title);
		case 'assurance':
			return text((r) => r.assuranceLevel);
		case 'methods':
			return text((r) => r.methods.join(', '));
		case 'owner':
			return text((r) => r.owner?.name ?? '');
		case 'parents':
			return text((r) => r.parents.join(', '));
		case 'children':
			return text((r) => r.children.join(', '));
		case 'model':
			return text((r) => (r.model ? `${r.model.name} v${r.model.version ?? ''}` : ''));
		case 'verdict':
			return text((r) => r.latestRun?.verdict ?? '');
		case 'lastChange':
			return text((r) => r.lastChange);
	}
}

/** Sorted by the chosen column (ties in identifier order); in identifier order when none is chosen. */
export function sortRows(rows: readonly MatrixRow[], sort: MatrixSort | null): MatrixRow[] {
	const byId = compareBy('identifier');
	if (!sort) return [...rows].sort(byId);
	const cmp = compareBy(sort.column);
	const dir = sort.desc ? -1 : 1;
	return [...rows].sort((a, b) => dir * cmp(a, b) || byId(a, b));
}

/** The group of a row when grouped by parent: the parents' identifiers ('' for top level). */
export const groupKeyOf = (r: MatrixRow): string => r.parents.join(', ');

export type MatrixLine =
	| { kind: 'group'; key: string; count: number; open: boolean }
	| { kind: 'row'; row: MatrixRow; grouped: boolean };

export interface MatrixLines {
	lines: MatrixLine[];
	/** Requirements that pass the filters. */
	matching: number;
	/** Requirement rows drawn (in open groups, when grouped). */
	rowsShown: number;
	groups: number;
	openGroups: number;
}

/**
 * The lines to draw. Grouped: top level first, then the groups in natural order of their parents;
 * each group's rows keep the sort. `closed` names the groups folded away (none when undefined).
 */
export function matrixLines(
	rows: readonly MatrixRow[],
	grouped: boolean,
	closed?: ReadonlySet<string>
): MatrixLines {
	if (!grouped) {
		return {
			lines: rows.map((row) => ({ kind: 'row', row, grouped: false })),
			matching: rows.length,
			rowsShown: rows.length,
			groups: 0,
			openGroups: 0
		};
	}
	const groups = new Map<string, MatrixRow[]>();
	for (const r of rows) {
		const k = groupKeyOf(r);
		const g = groups.get(k);
		if (g) g.push(r);
		else groups.set(k, [r]);
	}
	const keys = [...groups.keys()].sort((a, b) => (a === '' ? -1 : b === '' ? 1 : compareIdentifiers(a, b)));
	const lines: MatrixLine[] = [];
	let rowsShown = 0;
	let openGroups = 0;
	for (const key of keys) {
		const members = groups.get(key)!;
		const isOpen = !closed?.has(key);
		lines.push({ kind: 'group', key, count: members.length, open: isOpen });
		if (!isOpen) continue;
		openGroups++;
		rowsShown += members.length;
		for (const row of members) lines.push({ kind: 'row', row, grouped: true });
	}
	return { lines, matching: rows.length, rowsShown, groups: keys.length, openGroups };
}

/** The status line's count, in words that say what is on screen. */
export function shownWords(v: MatrixLines, total: number): string {
	const reqs = (n: number) => `${n} requirement${n === 1 ? '' : 's'}`;
	if (!v.groups && v.matching === v.rowsShown && v.lines.every((l) => l.kind === 'row'))
		return `Showing ${v.rowsShown} of ${reqs(total)}.`;
	const groups = `${v.groups} group${v.groups === 1 ? '' : 's'}`;
	const open =
		v.openGroups === 0 ? 'all collapsed' : v.openGroups === v.groups ? 'all open' : `${v.openGroups} open`;
	return `${reqs(v.matching)} of ${total} in ${groups} (${open}); showing ${v.rowsShown} of them.`;
}
