// Numbers typed as rows: zeros and poles ("-0.2 ± 3.1j", one or more per line), and matrices pasted the
// way numerics consoles print them ("0 1; -4 -0.4", "[0 1; -4 -0.4]", "[[0, 1], [-4, -0.4]]", rows on
// lines). Each number is read as JSON would read it (the nearest double to the decimal), so a model typed
// here is the same content, and hash, as the same model typed as JSON.

export interface RowProblem {
	/** 1-based row (a line of the text for roots; a matrix row for matrices), when the problem has one. */
	row?: number;
	/** 1-based column: a character column for roots, a matrix column (entry) for matrices. */
	column?: number;
	message: string;
}

export type RowsResult<T> = { ok: true; value: T } | { ok: false; problem: RowProblem };

const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/** A decimal numeral as a finite double, or null. A typographic minus sign counts as a minus. */
export function readNumber(text: string): number | null {
	const t = text.trim().replace(/\u2212/g, '-');
	if (!NUMBER.test(t)) return null;
	const x = Number(t);
	return Number.isFinite(x) ? x : null;
}

const quote = (s: string) => `"${s.length > 24 ? s.slice(0, 21) + '…' : s}"`;

// ---- zeros and poles ----

/** One root as typed: a real number, a complex number, or a conjugate pair ("re ± im j"). */
type RootEntry = { re: number; im: number; pair: boolean };

// re [± + -] im j, im may come before or after j; or a purely imaginary ±im j; or a real.
const COMPLEX =
	/^([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)?\s*(±|\+-|\+\/-|\+|-)\s*(?:([ij])\s*((?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)?|((?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)?\s*\*?\s*([ij]))$/;

function readRoot(text: string): RootEntry | null {
	const t = text
		.trim()
		.replace(/\u2212/g, '-')
		.replace(/\u2213/g, '±');
	const real = readNumber(t);
	if (real !== null) return { re: real, im: 0, pair: false };
	const m = COMPLEX.exec(t);
	if (!m) return null;
	const re = m[1] === undefined ? 0 : Number(m[1]);
	const magText = m[4] ?? m[5] ?? '1';
	const mag = Number(magText);
	if (!Number.isFinite(re) || !Number.isFinite(mag)) return null;
	const sign = m[2];
	if (sign === '±' || sign === '+-' || sign === '+/-') return { re, im: mag, pair: true };
	return { re, im: sign === '-' ? -mag : mag, pair: false };
}

/**
 * Zeros or poles, one or more per line (separated by commas or semicolons). A conjugate pair is
 * "re ± im j" (or "re +- im j"); a complex number written with + or - alone needs its conjugate
 * elsewhere in the list, or it is refused (the polynomial would not have real coefficients).
 * Returned as the engine's [re, im] pairs, in the order typed, a pair as [re, im], [re, -im].
 */
export function parseRoots(text: string, what: 'zero' | 'pole'): RowsResult<[number, number][]> {
	const out: [number, number][] = [];
	const singles: { re: number; im: number; row: number; column: number; text: string }[] = [];
	const lines = text.split(/\r?\n/);
	for (let r = 0; r < lines.length; r++) {
		const line = lines[r];
		const sep = /[,;]/g;
		let start = 0;
		for (;;) {
			const m = sep.exec(line);
			const end = m ? m.index : line.length;
			const piece = line.slice(start, end);
			if (piece.trim()) {
				const column = start + (piece.length - piece.trimStart().length) + 1;
				const root = readRoot(piece);
				if (!root)
					return {
						ok: false,
						problem: {
							row: r + 1,
							column,
							message: `${quote(piece.trim())} is not a ${what}: write a number such as -2, or a complex pair such as -0.2 ± 3.1j`
						}
					};
				if (root.pair) {
					if (root.im === 0) out.push([root.re, 0], [root.re, 0]);
					else out.push([root.re, root.im], [root.re, -root.im]);
				} else {
					if (root.im !== 0) singles.push({ ...root, row: r + 1, column, text: piece.trim() });
					out.push([root.re, root.im]);
				}
			}
			if (!m) break;
			start = end + 1;
		}
	}
	// Each lone complex needs a partner with the same real part and the opposite imaginary part.
	const used = new Array(singles.length).fill(false);
	for (let i = 0; i < singles.length; i++) {
		if (used[i]) continue;
		const j = singles.findIndex(
			(o, k) => k !== i && !used[k] && o.re === singles[i].re && o.im === -singles[i].im
		);
		if (j < 0) {
			const s = singles[i];
			const conj = `${s.re} ${s.im > 0 ? '-' : '+'} ${Math.abs(s.im)}j`;
			return {
				ok: false,
				problem: {
					row: s.row,
					column: s.column,
					message: `${quote(s.text)} has no conjugate ${conj} in the list: write the pair as ${s.re} ± ${Math.abs(s.im)}j`
				}
			};
		}
		used[i] = used[j] = true;
	}
	return { ok: true, value: out };
}

/** A root pair list written back as rows: conjugate pairs as "re ± im j", one per line. */
export function rootsText(list: readonly (readonly [number, number])[]): string {
	const lines: string[] = [];
	const used = new Array(list.length).fill(false);
	for (let i = 0; i < list.length; i++) {
		if (used[i]) continue;
		const [re, im] = list[i];
		used[i] = true;
		if (im === 0) {
			lines.push(String(re));
			continue;
		}
		const j = list.findIndex((o, k) => !used[k] && o[0] === re && o[1] === -im);
		if (j >= 0 && im > 0) {
			used[j] = true;
			lines.push(`${re} ± ${im}j`);
		} else lines.push(`${re} ${im < 0 ? '-' : '+'} ${Math.abs(im)}j`);
	}
	return lines.join('\n');
}

// ---- matrices ----

/** The rows of a matrix as texts, whatever bracket style was pasted. */
function matrixRows(text: string): RowsResult<string[]> {
	let t = text.trim().replace(/\u2212/g, '-');
	// "array([[...]])", "Matrix([[...]])": the call around the brackets.
	const call = /^[A-Za-z_][\w.]*\(([\s\S]*)\)$/.exec(t);
	if (call) t = call[1].trim();
	if (/^\[\s*\[/.test(t)) {
		// Nested brackets: each inner [...] is a row; only brackets, commas and spaces may lie between.
		const rows: string[] = [];
		const inner = t.replace(/^\[/, '').replace(/\]$/, '');
		const re = /\[([^[\]]*)\]/g;
		for (let m = re.exec(inner); m; m = re.exec(inner)) rows.push(m[1]);
		const rest = inner.replace(re, '');
		if (!/^[\s,;]*$/.test(rest) || !t.endsWith(']'))
			return {
				ok: false,
				problem: { message: 'the brackets do not match: write rows as [[a, b], [c, d]] or [a b; c d]' }
			};
		return { ok: true, value: rows };
	}
	if (t.startsWith('[') !== t.endsWith(']'))
		return {
			ok: false,
			problem: { message: 'the brackets do not match: write rows as [a b; c d] or one row per line' }
		};
	if (t.startsWith('[')) t = t.slice(1, -1);
	if (/[[\]]/.test(t))
		return {
			ok: false,
			problem: { message: 'unexpected bracket: write rows as [a b; c d] or one row per line' }
		};
	return { ok: true, value: t.split(/\r?\n|;/).filter((r) => r.trim() !== '') };
}

/** A matrix as rows of finite numbers (entries separated by spaces, tabs or commas). Shapes are not checked here. */
export function parseMatrix(text: string): RowsResult<number[][]> {
	const rows = matrixRows(text);
	if (!rows.ok) return rows;
	const out: number[][] = [];
	for (let r = 0; r < rows.value.length; r++) {
		const cells = rows.value[r]
			.trim()
			.split(/[\s,]+/)
			.filter((c) => c !== '');
		const row: number[] = [];
		for (let c = 0; c < cells.length; c++) {
			const x = readNumber(cells[c]);
			if (x === null)
				return {
					ok: false,
					problem: { row: r + 1, column: c + 1, message: `${quote(cells[c])} is not a number` }
				};
			row.push(x);
		}
		out.push(row);
	}
	return { ok: true, value: out };
}

export interface StateSpaceText {
	A: string;
	B: string;
	C: string;
	D: string;
}

export type MatrixName = keyof StateSpaceText;

export type StateSpaceResult =
	| { ok: true; A: number[][]; B: number[][]; C: number[][]; D: number[][] }
	| { ok: false; matrix: MatrixName; problem: RowProblem };

/**
 * A, B, C, D of a single-input, single-output model, x' = A x + B u, y = C x + D u: A is n x n, B n x 1,
 * C 1 x n, D 1 x 1 (left empty, D is 0). A wrong shape names the matrix and the first row (and column)
 * that does not fit.
 */
export function parseStateSpace(t: StateSpaceText): StateSpaceResult {
	const read: Partial<Record<MatrixName, number[][]>> = {};
	for (const name of ['A', 'B', 'C', 'D'] as const) {
		if (name === 'D' && !t.D.trim()) {
			read.D = [[0]];
			continue;
		}
		if (!t[name].trim()) return { ok: false, matrix: name, problem: { message: `enter matrix ${name}` } };
		const m = parseMatrix(t[name]);
		if (!m.ok) return { ok: false, matrix: name, problem: m.problem };
		read[name] = m.value;
	}
	const { A, B, C, D } = read as Record<MatrixName, number[][]>;
	const n = A.length;
	const bad = (matrix: MatrixName, message: string, row?: number, column?: number): StateSpaceResult => ({
		ok: false,
		matrix,
		problem: { row, column, message }
	});
	for (let r = 0; r < n; r++)
		if (A[r].length !== n)
			return A[r].length > n
				? bad(
						'A',
						`A has ${n} rows, so each row has ${n} entries (A is square); this row has more`,
						r + 1,
						n + 1
					)
				: bad(
						'A',
						`A has ${n} rows, so each row has ${n} entries (A is square); this row has ${A[r].length}`,
						r + 1,
						A[r].length + 1
					);
	const col = B.length === 1 && n > 1 && B[0].length === n;
	if (col)
		return bad(
			'B',
			`B is a column of ${n} entries (one per state, single input): write it as one entry per row, e.g. [0; 1]`,
			1,
			2
		);
	for (let r = 0; r < B.length; r++)
		if (B[r].length !== 1) return bad('B', 'B has one column (single input)', r + 1, B[r].length > 1 ? 2 : 1);
	if (B.length !== n)
		return bad(
			'B',
			`B has ${B.length} rows but A has ${n} states: B needs ${n} rows`,
			Math.min(B.length, n) + 1
		);
	if (C.length > 1 && C.every((r) => r.length === 1) && C.length === n)
		return bad(
			'C',
			`C is a row of ${n} entries (one per state, single output): write it on one line, e.g. [1 0]`,
			2,
			1
		);
	if (C.length !== 1) return bad('C', 'C has one row (single output)', 2);
	if (C[0].length !== n)
		return bad(
			'C',
			`C needs ${n} entries, one per state; it has ${C[0].length}`,
			1,
			Math.min(C[0].length, n) + 1
		);
	if (D.length !== 1 || D[0].length !== 1)
		return bad(
			'D',
			'D is one number (single input, single output)',
			D.length > 1 ? 2 : 1,
			D.length > 1 ? 1 : 2
		);
	return { ok: true, A, B, C, D };
}

/** A matrix written back as rows, one per line, entries separated by spaces. */
export function matrixText(m: readonly (readonly number[])[]): string {
	return m.map((r) => r.map(String).join(' ')).join('\n');
}
