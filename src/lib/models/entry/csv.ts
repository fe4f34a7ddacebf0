// Many operating points at once as CSV (RFC 4180: comma separated, double quotes around a cell that holds
// a comma, a quote or a line break, "" for a quote inside). The layout is ours, documented on the methods
// page and in DEVELOPERS.md:
//
//   label,expression,zeros,poles,gain,A,B,C,D
//   hover 20 C,66/((s+1.1)(s+3.5)(s+9)),,,,,,,
//   cruise,,,-1 ± 2j,5,,,,
//   cold,,,,,0 1; -4 -0.4,0; 1,4 0,0
//
// The header names the columns (any order, any case; only these names). Each row is one operating point
// and fills the cells of exactly one form: expression; or zeros, poles and gain (roots separated by ";");
// or A, B, C and D (rows separated by ";", entries by spaces; D may be left empty for 0).
import type { EntryForm, EntryPoint } from './index';

export const CSV_COLUMNS = ['label', 'expression', 'zeros', 'poles', 'gain', 'A', 'B', 'C', 'D'] as const;
type Column = (typeof CSV_COLUMNS)[number];

export interface CsvProblem {
	/** 1-based line of the file where the row starts. */
	row: number;
	/** The column's name in the header, when the problem is in one cell. */
	column?: string;
	message: string;
}

/** Rows of cells with the line each row starts on. A quote left open is a problem at its line. */
export function readCsv(
	text: string
): { ok: true; rows: { line: number; cells: string[] }[] } | { ok: false; problem: CsvProblem } {
	const rows: { line: number; cells: string[] }[] = [];
	let cells: string[] = [];
	let cell = '';
	let quoted = false;
	let line = 1;
	let rowLine = 1;
	let quoteLine = 1;
	const t = text.replace(/^\uFEFF/, '');
	for (let i = 0; i < t.length; i++) {
		const ch = t[i];
		if (quoted) {
			if (ch === '"' && t[i + 1] === '"') {
				cell += '"';
				i++;
			} else if (ch === '"') quoted = false;
			else {
				if (ch === '\n') line++;
				cell += ch;
			}
			continue;
		}
		if (ch === '"' && cell.trim() === '') {
			quoted = true;
			quoteLine = line;
			cell = '';
		} else if (ch === ',') {
			cells.push(cell);
			cell = '';
		} else if (ch === '\n' || ch === '\r') {
			if (ch === '\r' && t[i + 1] === '\n') i++;
			cells.push(cell);
			if (cells.some((c) => c.trim() !== '')) rows.push({ line: rowLine, cells });
			cells = [];
			cell = '';
			line++;
			rowLine = line;
		} else cell += ch;
	}
	if (quoted)
		return {
			ok: false,
			problem: { row: quoteLine, message: 'a quoted cell is not closed (a " is missing)' }
		};
	cells.push(cell);
	if (cells.some((c) => c.trim() !== '')) rows.push({ line: rowLine, cells });
	return { ok: true, rows };
}

const FORM_COLUMNS: Record<EntryForm, Column[]> = {
	expression: ['expression'],
	zpk: ['zeros', 'poles', 'gain'],
	ss: ['A', 'B', 'C', 'D']
};

export type CsvPoints =
	{ ok: true; points: EntryPoint[]; lines: number[] } | { ok: false; problem: CsvProblem };

/** The operating points of a CSV file in our layout, as entries (still to be read by buildPoint). */
export function pointsFromCsv(text: string): CsvPoints {
	const read = readCsv(text);
	if (!read.ok) return read;
	if (!read.rows.length) return { ok: false, problem: { row: 1, message: 'the file is empty' } };
	const [head, ...body] = read.rows;
	const index = new Map<Column, number>();
	for (let i = 0; i < head.cells.length; i++) {
		const name = head.cells[i].trim();
		const col = CSV_COLUMNS.find((c) => c.toLowerCase() === name.toLowerCase());
		if (!col)
			return {
				ok: false,
				problem: {
					row: head.line,
					column: name,
					message: `unknown column "${name}" in the header: the columns are ${CSV_COLUMNS.join(', ')}`
				}
			};
		if (index.has(col))
			return {
				ok: false,
				problem: { row: head.line, column: col, message: `the column "${col}" appears twice` }
			};
		index.set(col, i);
	}
	if (!index.has('label'))
		return { ok: false, problem: { row: head.line, message: 'the header has no "label" column' } };
	if (!body.length)
		return { ok: false, problem: { row: head.line + 1, message: 'the file has no operating points' } };
	const points: EntryPoint[] = [];
	const lines: number[] = [];
	for (const r of body) {
		if (r.cells.length > head.cells.length)
			return {
				ok: false,
				problem: {
					row: r.line,
					message: `${r.cells.length} cells, but the header names ${head.cells.length} columns`
				}
			};
		const cell = (c: Column) => (index.has(c) ? (r.cells[index.get(c)!] ?? '').trim() : '');
		const filled = (Object.keys(FORM_COLUMNS) as EntryForm[]).filter((f) =>
			FORM_COLUMNS[f].some((c) => cell(c) !== '')
		);
		if (filled.length !== 1)
			return {
				ok: false,
				problem: {
					row: r.line,
					message:
						filled.length === 0
							? 'no model: fill the expression, or zeros/poles/gain, or A/B/C/D'
							: `cells of ${filled.length} forms are filled (${filled.join(', ')}): fill one form per row`
				}
			};
		points.push({
			label: cell('label'),
			form: filled[0],
			expression: cell('expression'),
			// Roots are separated by ";" in a cell (a comma would end the cell).
			zeros: cell('zeros'),
			poles: cell('poles'),
			gain: cell('gain'),
			A: cell('A'),
			B: cell('B'),
			C: cell('C'),
			D: cell('D')
		});
		lines.push(r.line);
	}
	return { ok: true, points, lines };
}
