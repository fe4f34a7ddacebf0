// The trace matrix's columns as the browser shows them, and which of them a person may hide. Pure:
// read by the page and by the server's preference schema (one list, one place).

/** Always shown, first, and kept in view while the table scrolls sideways. */
export const FIXED_COLUMNS = ['identifier', 'state'] as const;

/** The columns a person chooses from, in the order they appear after the fixed ones. */
export const CHOOSABLE_COLUMNS = [
	'blockers',
	'title',
	'level',
	'assurance',
	'methods',
	'owner',
	'parents',
	'children',
	'model',
	'verdict',
	'evidence',
	'lastChange'
] as const;

export type FixedColumn = (typeof FIXED_COLUMNS)[number];
export type ChoosableColumn = (typeof CHOOSABLE_COLUMNS)[number];
export type MatrixColumn = FixedColumn | ChoosableColumn;

export const COLUMN_HEADERS: Record<MatrixColumn, string> = {
	identifier: 'Identifier',
	state: 'State',
	blockers: 'Open items',
	title: 'Title',
	level: 'Level',
	assurance: 'DAL',
	methods: 'Methods',
	owner: 'Owner',
	parents: 'Derived from',
	children: 'Derived',
	model: 'Model version',
	verdict: 'Latest verdict',
	evidence: 'Evidence',
	lastChange: 'Last change'
};

/** Shown until a person chooses: what fits a 1440 px screen beside the fixed columns. */
export const DEFAULT_COLUMNS: readonly ChoosableColumn[] = [
	'blockers',
	'title',
	'level',
	'assurance',
	'methods',
	'model',
	'verdict',
	'evidence'
];

/** The columns to draw, fixed ones first, the chosen ones in the catalogue's order. */
export function columnsShown(chosen: readonly ChoosableColumn[]): MatrixColumn[] {
	const set = new Set(chosen);
	return [...FIXED_COLUMNS, ...CHOOSABLE_COLUMNS.filter((c) => set.has(c))];
}
