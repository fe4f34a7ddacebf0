// Model entry as a person writes it: per operating point, a transfer-function expression in s, zeros /
// poles / gain as rows, or state-space matrices as pasted from a numerics console. Each form is read into
// one of the engine's models (tf, zpk, ss) and checked by the engine's own schema, so the stored content,
// and the version's hash, is the same whichever form was used. Pure: the publish page's live preview (in
// the browser) and the form action and API (on the server) call the same functions.
import { z } from 'zod';
import { modelSchema, strictIn, type Model } from '../../stability/index';
import { parseTransferExpression, polynomialText, tfExpression } from './expression';
import { matrixText, parseRoots, parseStateSpace, readNumber, rootsText, type MatrixName } from './rows';

export { parseTransferExpression, polynomialText, tfExpression } from './expression';
export { parseRoots, parseMatrix, parseStateSpace, readNumber } from './rows';
export { pointsFromCsv, readCsv, CSV_COLUMNS } from './csv';

export type EntryForm = 'expression' | 'zpk' | 'ss';
export const ENTRY_FORMS: { value: EntryForm; label: string }[] = [
	{ value: 'expression', label: 'Transfer function' },
	{ value: 'zpk', label: 'Zeros, poles, gain' },
	{ value: 'ss', label: 'State space' }
];

/** One operating point as typed: the label, the chosen form, and the text of every field. */
export interface EntryPoint {
	label: string;
	form: EntryForm;
	expression: string;
	zeros: string;
	poles: string;
	gain: string;
	A: string;
	B: string;
	C: string;
	D: string;
}
export type EntryField = 'label' | 'expression' | 'zeros' | 'poles' | 'gain' | MatrixName;

export const FIELD_WORDS: Record<EntryField, string> = {
	label: 'label',
	expression: 'transfer function',
	zeros: 'zeros',
	poles: 'poles',
	gain: 'gain',
	A: 'matrix A',
	B: 'matrix B',
	C: 'matrix C',
	D: 'matrix D'
};

export const emptyEntry = (label = '', form: EntryForm = 'expression'): EntryPoint => ({
	label,
	form,
	expression: '',
	zeros: '',
	poles: '',
	gain: '',
	A: '',
	B: '',
	C: '',
	D: ''
});

export interface EntryIssue {
	/** 0-based index of the operating point. */
	point: number;
	label: string;
	field: EntryField;
	row?: number;
	column?: number;
	message: string;
}

/** "Operating point 2 (cruise), poles, row 3, column 1: ..." */
export function issueText(i: EntryIssue): string {
	const head = `Operating point ${i.point + 1}${i.label.trim() ? ` (${i.label.trim()})` : ''}`;
	const place = [FIELD_WORDS[i.field], i.row ? `row ${i.row}` : '', i.column ? `column ${i.column}` : '']
		.filter(Boolean)
		.join(', ');
	return `${head}, ${place}: ${i.message}`;
}

/** What was read, written back so the person sees how the text was understood. */
export type Readback =
	| { form: 'expression'; numerator: string; denominator: string }
	| { form: 'zpk'; zeros: string[]; poles: string[]; gain: number }
	| { form: 'ss'; states: number; A: string; B: string; C: string; D: string };

export type BuiltPoint =
	| { ok: true; label: string; model: Model; readback: Readback }
	| { ok: false; label: string; issue: EntryIssue };

const ENGINE_FIELD: Record<string, EntryField> = {
	num: 'expression',
	den: 'expression',
	zeros: 'zeros',
	poles: 'poles',
	gain: 'gain',
	A: 'A',
	B: 'B',
	C: 'C',
	D: 'D'
};

const rootWords = (l: [number, number][]) =>
	l.map(([re, im]) => (im === 0 ? String(re) : `${re} ${im < 0 ? '-' : '+'} ${Math.abs(im)}j`));

/** Read one operating point; the problem, if any, names the point, the field and the row and column. */
export function buildPoint(p: EntryPoint, index: number): BuiltPoint {
	const label = p.label.trim();
	const fail = (field: EntryField, message: string, row?: number, column?: number): BuiltPoint => ({
		ok: false,
		label,
		issue: { point: index, label, field, row, column, message }
	});
	if (!label) return fail('label', 'give each operating point a label, e.g. "hover, 20 C"');
	if (label.length > 80) return fail('label', 'a label has at most 80 characters');
	let model: Model;
	let readback: Readback;
	if (p.form === 'expression') {
		const r = parseTransferExpression(p.expression);
		if (!r.ok) return fail('expression', r.problem.message, undefined, r.problem.column);
		model = { kind: 'tf', num: r.num, den: r.den };
		readback = { form: 'expression', numerator: polynomialText(r.num), denominator: polynomialText(r.den) };
	} else if (p.form === 'zpk') {
		const z = parseRoots(p.zeros, 'zero');
		if (!z.ok) return fail('zeros', z.problem.message, z.problem.row, z.problem.column);
		const pl = parseRoots(p.poles, 'pole');
		if (!pl.ok) return fail('poles', pl.problem.message, pl.problem.row, pl.problem.column);
		if (!p.gain.trim()) return fail('gain', 'enter the gain, a number');
		const k = readNumber(p.gain);
		if (k === null) return fail('gain', `"${p.gain.trim()}" is not a number`);
		model = { kind: 'zpk', zeros: z.value, poles: pl.value, gain: k };
		readback = { form: 'zpk', zeros: rootWords(z.value), poles: rootWords(pl.value), gain: k };
	} else if (p.form === 'ss') {
		const r = parseStateSpace(p);
		if (!r.ok) return fail(r.matrix, r.problem.message, r.problem.row, r.problem.column);
		model = { kind: 'ss', A: r.A, B: r.B, C: r.C, D: r.D };
		readback = {
			form: 'ss',
			states: r.A.length,
			A: matrixText(r.A),
			B: matrixText(r.B),
			C: matrixText(r.C),
			D: matrixText(r.D)
		};
	} else return fail('expression', `unknown form "${String(p.form)}"`);
	// The engine's own rules (proper, leading coefficient, conjugates, shapes) decide what is a model.
	const checked = modelSchema.safeParse(model);
	if (!checked.success) {
		const issue = checked.error.issues[0];
		const field =
			ENGINE_FIELD[String(issue.path[0])] ??
			(p.form === 'ss' ? 'A' : p.form === 'zpk' ? 'poles' : 'expression');
		const at = typeof issue.path[1] === 'number' ? issue.path[1] + 1 : undefined;
		const col = typeof issue.path[2] === 'number' ? issue.path[2] + 1 : undefined;
		return fail(
			field,
			issue.message,
			p.form === 'expression' ? undefined : at,
			p.form === 'ss' ? col : undefined
		);
	}
	return { ok: true, label, model: checked.data as Model, readback };
}

/** Every point read; the version's content when all are good, and each problem once. */
export function buildPoints(list: readonly EntryPoint[]): {
	built: BuiltPoint[];
	points: { label: string; model: Model }[] | null;
	issues: EntryIssue[];
} {
	const built = list.map(buildPoint);
	const issues = built.flatMap((b) => (b.ok ? [] : [b.issue]));
	const seen = new Map<string, number>();
	built.forEach((b, i) => {
		if (!b.ok) return;
		if (seen.has(b.label))
			issues.push({
				point: i,
				label: b.label,
				field: 'label',
				message: `the label "${b.label}" is used twice`
			});
		seen.set(b.label, i);
	});
	const points = issues.length
		? null
		: built.map((b) => (b.ok ? { label: b.label, model: b.model } : (null as never)));
	return { built, points, issues };
}

/** A stored model as an entry in its own form (a tf as an expression that reads back to the same numbers). */
export function entryFromModel(
	label: string,
	model: Model | { kind: 'expression'; expression: string }
): EntryPoint {
	const e = emptyEntry(label);
	switch (model.kind) {
		case 'expression':
			return { ...e, form: 'expression', expression: model.expression };
		case 'tf':
			return { ...e, form: 'expression', expression: tfExpression(model.num, model.den) };
		case 'zpk':
			return {
				...e,
				form: 'zpk',
				zeros: rootsText(model.zeros),
				poles: rootsText(model.poles),
				gain: String(model.gain)
			};
		case 'ss':
			return {
				...e,
				form: 'ss',
				A: matrixText(model.A),
				B: matrixText(model.B),
				C: matrixText(model.C),
				D: matrixText(model.D)
			};
	}
}

// ---- the "expression" kind in JSON (API bodies, our upload file, the advanced JSON form) ----

const expressionModel = z.strictObject(
	{
		kind: z.literal('expression'),
		expression: z.string({ error: 'expression must be text, e.g. "66/((s+1.1)(s+3.5)(s+9))"' })
	},
	strictIn('an "expression" model')
);

/**
 * A model as a client may send it: one of the engine's kinds, or { kind: "expression", expression }.
 * An expression becomes the equal tf before anything else sees it (the engine's schema is unchanged), so
 * it is stored, and hashed, as that tf. A problem in the expression is reported at "expression", with the
 * column in the message.
 */
export const modelInputSchema = z.unknown().transform((raw, ctx): Model => {
	let input: unknown = raw;
	if (raw !== null && typeof raw === 'object' && (raw as { kind?: unknown }).kind === 'expression') {
		const e = expressionModel.safeParse(raw);
		if (!e.success) {
			for (const iss of e.error.issues)
				ctx.addIssue({ code: 'custom', path: iss.path as (string | number)[], message: iss.message });
			return z.NEVER;
		}
		const r = parseTransferExpression(e.data.expression);
		if (!r.ok) {
			ctx.addIssue({
				code: 'custom',
				path: ['expression'],
				message: `column ${r.problem.column}: ${r.problem.message}`
			});
			return z.NEVER;
		}
		input = { kind: 'tf', num: r.num, den: r.den };
	}
	const m = modelSchema.safeParse(input);
	if (!m.success) {
		const fromExpression = input !== raw;
		for (const iss of m.error.issues)
			ctx.addIssue({
				code: 'custom',
				// A rule of the engine broken by what an expression gave (e.g. improper): said at "expression".
				path: fromExpression ? ['expression'] : (iss.path as (string | number)[]),
				message: fromExpression ? `${iss.message} (read as ${describeTf(input as Model)})` : iss.message
			});
		return z.NEVER;
	}
	return m.data as Model;
});

function describeTf(m: Model): string {
	return m.kind === 'tf' ? `(${polynomialText(m.num)}) / (${polynomialText(m.den)})` : m.kind;
}

// ---- the publish form's fields ----

/** The form field of one point's part: "p0.expression". */
export const entryFieldName = (point: number, field: EntryField | 'form') => `p${point}.${field}`;

/**
 * The points typed on the publish form, read from its fields (`count`, then `p<i>.label`, `p<i>.form`,
 * `p<i>.expression`, ...); a field the form did not show is empty. At most `max` + 1 points are read, so
 * a form with too many is refused by the version's own limit rather than cut short.
 */
export function entriesFromForm(get: (name: string) => string | null, max: number): EntryPoint[] {
	const count = Math.max(0, Math.min(max + 1, Math.floor(Number(get('count') ?? 0)) || 0));
	const out: EntryPoint[] = [];
	for (let i = 0; i < count; i++) {
		const v = (f: EntryField | 'form') => get(entryFieldName(i, f)) ?? '';
		const form = v('form');
		out.push({
			label: v('label'),
			// An unknown form is kept, so buildPoint refuses it by name.
			form: (form || 'expression') as EntryForm,
			expression: v('expression'),
			zeros: v('zeros'),
			poles: v('poles'),
			gain: v('gain'),
			A: v('A'),
			B: v('B'),
			C: v('C'),
			D: v('D')
		});
	}
	return out;
}

/** A problem shown in place under its field: the row and column, then the reason. */
export function issueInPlace(i: EntryIssue): string {
	const place = [i.row ? `row ${i.row}` : '', i.column ? `column ${i.column}` : '']
		.filter(Boolean)
		.join(', ');
	return place
		? `${place.charAt(0).toUpperCase()}${place.slice(1)}: ${i.message}`
		: i.message.charAt(0).toUpperCase() + i.message.slice(1);
}
