import Papa from 'papaparse';

// Measured frequency responses from rig and flight tests, as CSV: a frequency column (Hz or rad/s) and
// either magnitude (dB or absolute) and phase (degrees, or radians when the header says so), or real and
// imaginary parts. The delimiter and a header row are detected; when the header does not give the units
// (or there is no header) the caller must say them. Every error names the row (1-based, as an editor
// shows it) and the column. Plain data in, plain data out: no I/O.

export const FREQUENCY_UNITS = ['Hz', 'rad/s'] as const;
export const MAGNITUDE_UNITS = ['dB', 'abs'] as const;
export const LAYOUTS = ['magnitude-phase', 'real-imaginary'] as const;
export type FrequencyUnit = (typeof FREQUENCY_UNITS)[number];
export type MagnitudeUnit = (typeof MAGNITUDE_UNITS)[number];
export type Layout = (typeof LAYOUTS)[number];
export type PhaseUnit = 'deg' | 'rad';

export interface ParseOptions {
	frequencyUnit?: FrequencyUnit;
	magnitudeUnit?: MagnitudeUnit;
	layout?: Layout;
}

/** One measured point: w in rad/s, G(jw) = re + j im. `row` is the source row. */
export interface MeasuredPoint {
	w: number;
	re: number;
	im: number;
	row: number;
}

export interface MeasuredResponse {
	layout: Layout;
	units: { frequency: FrequencyUnit; magnitude: MagnitudeUnit | null; phase: PhaseUnit | null };
	delimiter: string;
	header: string[] | null;
	points: MeasuredPoint[];
}

export type ProblemField = 'file' | 'frequencyUnit' | 'magnitudeUnit' | 'layout';

/** One thing wrong with a file (a garbled file has several; all are reported, up to MAX_PROBLEMS). */
export interface ResponseProblem {
	message: string;
	field: ProblemField;
	row: number | null;
	column: string | null;
}

/**
 * The file was refused. `message`, `field`, `row` and `column` describe the first problem found;
 * `problems` lists every problem found (at most MAX_PROBLEMS), `more` counts the ones left out.
 */
export class ResponseParseError extends Error {
	public problems: ResponseProblem[];
	public more = 0;
	constructor(
		message: string,
		/** The form or API field to fix when the problem is a missing choice (frequencyUnit, magnitudeUnit, layout). */
		public field: ProblemField = 'file',
		public row: number | null = null,
		public column: string | null = null
	) {
		super(message);
		this.name = 'ResponseParseError';
		this.problems = [{ message, field, row, column }];
	}
}

/** How many problems one refusal lists: enough to fix a garbled file in one go, few enough to read. */
export const MAX_PROBLEMS = 20;

/** Problems found so far; `fail()` throws them together once nothing more can be checked. */
class Problems {
	list: ResponseProblem[] = [];
	count = 0;
	add(
		message: string,
		field: ProblemField = 'file',
		row: number | null = null,
		column: string | null = null
	) {
		this.count += 1;
		if (this.list.length < MAX_PROBLEMS) this.list.push({ message, field, row, column });
	}
	throwIfAny(): void {
		if (this.count === 0) return;
		const [first] = this.list;
		const e = new ResponseParseError(first.message, first.field, first.row, first.column);
		e.problems = this.list;
		e.more = this.count - this.list.length;
		throw e;
	}
}

export const MAX_POINTS = 100_000;

type Role = 'frequency' | 'magnitude' | 'phase' | 'real' | 'imaginary';

function tokens(cell: string): string[] {
	return cell
		.toLowerCase()
		.replace(/°/g, ' deg ')
		.split(/[^a-z0-9/|]+/)
		.filter(Boolean);
}

function roleOf(cell: string): Role | null {
	const t = tokens(cell);
	const first = t[0] ?? '';
	if (/^(freq|frequency|frequencies|f|w|omega|hz)$/.test(first) || (first === 'rad/s' && t.length === 1))
		return 'frequency';
	if (/^(mag|magnitude|gain|amp|amplitude|\|g\||abs|modulus)$/.test(first)) return 'magnitude';
	if (/^(phase|ph|arg|angle|phi)$/.test(first)) return 'phase';
	if (/^(re|real)$/.test(first)) return 'real';
	if (/^(im|imag|imaginary)$/.test(first)) return 'imaginary';
	return null;
}

function frequencyUnitOf(cell: string): FrequencyUnit | null {
	const t = tokens(cell);
	if (t.includes('hz')) return 'Hz';
	if (t.some((x) => /^rad\/s(ec)?$/.test(x)) || (t.includes('rad') && (t.includes('s') || t.includes('sec'))))
		return 'rad/s';
	return null;
}

function magnitudeUnitOf(cell: string): MagnitudeUnit | null {
	const t = tokens(cell);
	if (t.includes('db')) return 'dB';
	if (t.some((x) => ['abs', 'absolute', 'linear', 'lin', 'ratio'].includes(x))) return 'abs';
	return null;
}

function phaseUnitOf(cell: string): PhaseUnit | null {
	const t = tokens(cell);
	if (t.some((x) => ['deg', 'degree', 'degrees'].includes(x))) return 'deg';
	if (t.some((x) => ['rad', 'radian', 'radians'].includes(x))) return 'rad';
	return null;
}

function looksNumeric(cell: string): boolean {
	return cell.trim() !== '' && Number.isFinite(Number(normaliseNumber(cell)));
}

/** Decimal commas are accepted when the delimiter is not a comma ("1,5" with ";" between cells). */
function normaliseNumber(cell: string): string {
	const s = cell.trim();
	return /^[+-]?\d+,\d+([eE][+-]?\d+)?$/.test(s) ? s.replace(',', '.') : s;
}

function splitRows(raw: string): { rows: { cells: string[]; line: number }[]; delimiter: string } {
	// Comment lines (# ...) are blanked, not removed, so row numbers stay those of the file.
	const text = raw
		.split(/\r\n|\n|\r/)
		.map((l) => (l.trimStart().startsWith('#') ? '' : l))
		.join('\n');
	const parsed = Papa.parse<string[]>(text, {
		skipEmptyLines: false,
		delimitersToGuess: [',', ';', '\t', '|']
	});
	let delimiter = parsed.meta.delimiter;
	let data = parsed.data;
	// Columns separated by spaces: the guesser falls back to ',' and finds one column per row.
	const nonEmpty = data.filter((r) => r.some((c) => c.trim() !== ''));
	if (
		nonEmpty.length &&
		nonEmpty.every((r) => r.length === 1) &&
		nonEmpty.some((r) => /\S\s+\S/.test(r[0]))
	) {
		delimiter = ' ';
		data = text.split(/\r\n|\n|\r/).map((l) => (l.trim() === '' ? [''] : l.trim().split(/\s+/)));
	}
	const rows: { cells: string[]; line: number }[] = [];
	data.forEach((cells, i) => {
		const line = i + 1;
		if (cells.every((c) => c.trim() === '')) return;
		rows.push({ cells: cells.map((c) => c.trim()), line });
	});
	return { rows, delimiter };
}

/**
 * Parse a measured frequency response. Throws ResponseParseError naming the row and column of every
 * problem found: the header and unit choices first, then every data row (a file is checked to its end,
 * not only to its first bad cell).
 */
export function parseFrequencyResponse(text: string, opts: ParseOptions = {}): MeasuredResponse {
	const { rows, delimiter } = splitRows(text.replace(/^\uFEFF/, ''));
	if (rows.length === 0) throw new ResponseParseError('The file holds no rows.');
	const problems = new Problems();
	const first = rows[0];
	const hasHeader = first.cells.some((c) => !looksNumeric(c));
	let header: string[] | null = null;
	let layout: Layout;
	let col: { frequency: number; a: number; b: number };
	const names: Record<Role, string> = {
		frequency: 'frequency',
		magnitude: 'magnitude',
		phase: 'phase',
		real: 'real',
		imaginary: 'imaginary'
	};
	let frequencyUnit: FrequencyUnit | null = null;
	let magnitudeUnit: MagnitudeUnit | null = null;
	let phaseUnit: PhaseUnit | null = null;

	if (hasHeader) {
		header = first.cells;
		const found: Partial<Record<Role, number>> = {};
		header.forEach((cell, i) => {
			const r = roleOf(cell);
			if (r && found[r] === undefined) {
				found[r] = i;
				names[r] = cell;
			}
		});
		if (found.frequency === undefined) {
			problems.add(
				`Row ${first.line}: no frequency column in the header (${header.join(', ')}); name one "frequency", "freq", "f" or "w".`,
				'file',
				first.line,
				null
			);
		}
		const magPhase = found.magnitude !== undefined || found.phase !== undefined;
		const reIm = found.real !== undefined || found.imaginary !== undefined;
		if (magPhase && reIm && !opts.layout) {
			problems.add(
				'The header has both magnitude/phase and real/imaginary columns: choose which pair to use.',
				'layout'
			);
		}
		layout = opts.layout ?? (reIm && !magPhase ? 'real-imaginary' : 'magnitude-phase');
		const [ra, rb]: [Role, Role] =
			layout === 'magnitude-phase' ? ['magnitude', 'phase'] : ['real', 'imaginary'];
		for (const r of [ra, rb]) {
			if (found[r] === undefined) {
				problems.add(
					`Row ${first.line}: the ${r} column is missing (the header is: ${header.join(', ')}).`,
					'file',
					first.line,
					r
				);
			}
		}
		// Without the three columns the rows cannot be read: report what is known so far.
		problems.throwIfAny();
		col = { frequency: found.frequency!, a: found[ra]!, b: found[rb]! };
		frequencyUnit = frequencyUnitOf(header[col.frequency]);
		if (layout === 'magnitude-phase') {
			magnitudeUnit = magnitudeUnitOf(header[col.a]);
			phaseUnit = phaseUnitOf(header[col.b]);
		}
	} else {
		if (!opts.layout) {
			throw new ResponseParseError(
				'The file has no header row: say whether the columns after frequency are magnitude and phase or real and imaginary parts.',
				'layout'
			);
		}
		layout = opts.layout;
		col = { frequency: 0, a: 1, b: 2 };
		if (layout === 'real-imaginary') {
			names.real = 'column 2 (real)';
			names.imaginary = 'column 3 (imaginary)';
		} else {
			names.magnitude = 'column 2 (magnitude)';
			names.phase = 'column 3 (phase)';
		}
		names.frequency = 'column 1 (frequency)';
	}

	// Units: the header wins; a choice that contradicts it is an error rather than silently ignored.
	// A missing unit is reported and the rows are still checked (their checks do not need it).
	const choose = <U extends string>(
		fromHeader: U | null,
		chosen: U | undefined,
		field: 'frequencyUnit' | 'magnitudeUnit',
		what: string
	): U | null => {
		if (fromHeader && chosen && fromHeader !== chosen) {
			problems.add(`The header gives the ${what} in ${fromHeader} but ${chosen} was chosen.`, field);
			return fromHeader;
		}
		const u = fromHeader ?? chosen ?? null;
		if (!u)
			problems.add(
				`The ${hasHeader ? 'header does not say' : 'file has no header to say'} which unit the ${what} is in: choose one.`,
				field
			);
		return u;
	};
	const fUnit = choose(frequencyUnit, opts.frequencyUnit, 'frequencyUnit', 'frequency');
	const mUnit =
		layout === 'magnitude-phase'
			? choose(magnitudeUnit, opts.magnitudeUnit, 'magnitudeUnit', 'magnitude')
			: null;
	const pUnit: PhaseUnit | null = layout === 'magnitude-phase' ? (phaseUnit ?? 'deg') : null;

	const roleA: Role = layout === 'magnitude-phase' ? 'magnitude' : 'real';
	const roleB: Role = layout === 'magnitude-phase' ? 'phase' : 'imaginary';
	const body = hasHeader ? rows.slice(1) : rows;
	if (body.length === 0) problems.add('The file has a header but no data rows.');
	if (body.length > MAX_POINTS) {
		problems.add(`The file has ${body.length} data rows; at most ${MAX_POINTS} are accepted.`);
		problems.throwIfAny();
	}

	/** A cell's number, or null after recording why it is not one. */
	const cell = (r: { cells: string[]; line: number }, index: number, role: Role): number | null => {
		const raw = r.cells[index];
		if (raw === undefined || raw === '') {
			problems.add(`Row ${r.line}, column "${names[role]}": the cell is empty.`, 'file', r.line, names[role]);
			return null;
		}
		const v = Number(normaliseNumber(raw));
		if (!Number.isFinite(v)) {
			problems.add(
				`Row ${r.line}, column "${names[role]}": "${raw}" is not a number.`,
				'file',
				r.line,
				names[role]
			);
			return null;
		}
		return v;
	};

	const points: MeasuredPoint[] = [];
	// Increase is checked on the frequency as written: Hz and rad/s differ by a positive factor.
	let prevF = -Infinity;
	let prevLine = 0;
	for (const r of body) {
		const f = cell(r, col.frequency, 'frequency');
		const a = cell(r, col.a, roleA);
		const b = cell(r, col.b, roleB);
		if (f !== null && !(f > 0)) {
			problems.add(
				`Row ${r.line}, column "${names.frequency}": frequency ${f} is not positive.`,
				'file',
				r.line,
				names.frequency
			);
		} else if (f !== null) {
			if (!(f > prevF)) {
				problems.add(
					`Row ${r.line}, column "${names.frequency}": frequency ${f} does not increase (row ${prevLine} has ${prevF}).`,
					'file',
					r.line,
					names.frequency
				);
			}
			prevF = f;
			prevLine = r.line;
		}
		if (layout === 'magnitude-phase' && mUnit === 'abs' && a !== null && a < 0) {
			problems.add(
				`Row ${r.line}, column "${names.magnitude}": an absolute magnitude cannot be negative (${a}).`,
				'file',
				r.line,
				names.magnitude
			);
		}
		if (problems.count > 0 || f === null || a === null || b === null || !fUnit) continue;
		const w = fUnit === 'Hz' ? 2 * Math.PI * f : f;
		let re: number;
		let im: number;
		if (layout === 'magnitude-phase') {
			const mag = mUnit === 'dB' ? 10 ** (a / 20) : a;
			const phi = pUnit === 'rad' ? b : (b * Math.PI) / 180;
			re = mag * Math.cos(phi);
			im = mag * Math.sin(phi);
		} else {
			re = a;
			im = b;
		}
		points.push({ w, re, im, row: r.line });
	}
	problems.throwIfAny();
	return {
		layout,
		units: { frequency: fUnit!, magnitude: mUnit, phase: pUnit },
		delimiter,
		header,
		points
	};
}
