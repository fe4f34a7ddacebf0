// Input validation for models, checks and cases. Every rejection names the field and the reason.
import { z } from 'zod';

export interface InputIssue {
	path: string;
	message: string;
}

export class ModelInputError extends Error {
	issues: InputIssue[];
	constructor(issues: InputIssue[]) {
		super(issues.map((i) => `${i.path || '(input)'}: ${i.message}`).join('; '));
		this.name = 'ModelInputError';
		this.issues = issues;
	}
}

/**
 * Objects refuse fields they do not know: a misspelt or unsupported field (a "delay", a "sampletime") would
 * otherwise be dropped and the model analysed as if it were not there. The message names the field.
 */
export function unknownFieldMessage(keys: readonly PropertyKey[], where: string): string {
	const names = keys.map((k) => `"${String(k)}"`).join(', ');
	return `unknown field${keys.length > 1 ? 's' : ''} ${names} in ${where}: not supported by this engine (remove ${keys.length > 1 ? 'them' : 'it'})`;
}

/** zod options for a strict object whose unknown fields are refused with unknownFieldMessage. */
export const strictIn = (where: string) => ({
	error: (iss: { code?: string; keys?: PropertyKey[] }) =>
		iss.code === 'unrecognized_keys' ? unknownFieldMessage(iss.keys ?? [], where) : undefined
});

const finite = (what: string) =>
	z.number({
		error: (iss) => (iss.input === undefined ? `${what} is required` : `${what} must be a finite number`)
	});

const coeffList = (what: string) =>
	z.array(finite(`each ${what} coefficient`), { error: `${what} must be an array of numbers` });

const pair = z.tuple([finite('real part'), finite('imaginary part')], {
	error: 'each entry must be a [re, im] pair of finite numbers'
});

const matrix = (what: string) =>
	z.array(z.array(finite(`each entry of ${what}`), { error: `each row of ${what} must be an array` }), {
		error: `${what} must be an array of rows`
	});

const tfSchema = z
	.strictObject(
		{ kind: z.literal('tf'), num: coeffList('numerator'), den: coeffList('denominator') },
		strictIn('a "tf" model')
	)
	.superRefine((m, ctx) => {
		if (m.den.length === 0) ctx.addIssue({ code: 'custom', path: ['den'], message: 'denominator is empty' });
		else if (m.den.every((v) => v === 0))
			ctx.addIssue({ code: 'custom', path: ['den'], message: 'denominator is all zeros' });
		else if (m.den[0] === 0)
			ctx.addIssue({
				code: 'custom',
				path: ['den', 0],
				message: 'leading denominator coefficient is zero (coefficients are highest power first; drop it)'
			});
		if (m.num.length === 0) ctx.addIssue({ code: 'custom', path: ['num'], message: 'numerator is empty' });
		else if (m.num.length > 1 && m.num[0] === 0)
			ctx.addIssue({
				code: 'custom',
				path: ['num', 0],
				message: 'leading numerator coefficient is zero (coefficients are highest power first; drop it)'
			});
		if (m.den.length > 0 && m.num.length > m.den.length)
			ctx.addIssue({
				code: 'custom',
				path: ['num'],
				message: `improper model: numerator degree ${m.num.length - 1} exceeds denominator degree ${m.den.length - 1}`
			});
	});

function conjugateIssue(list: [number, number][]): number | null {
	// Each complex entry needs a partner with the same real part and opposite imaginary part, counted with
	// multiplicity, so the polynomial has real coefficients.
	const used = new Array(list.length).fill(false);
	for (let i = 0; i < list.length; i++) {
		if (used[i] || list[i][1] === 0) continue;
		let found = -1;
		for (let j = 0; j < list.length; j++) {
			if (j === i || used[j]) continue;
			if (list[j][0] === list[i][0] && list[j][1] === -list[i][1]) {
				found = j;
				break;
			}
		}
		if (found < 0) return i;
		used[i] = used[found] = true;
	}
	return null;
}

const zpkSchema = z
	.strictObject(
		{
			kind: z.literal('zpk'),
			zeros: z.array(pair, { error: 'zeros must be an array of [re, im] pairs' }),
			poles: z.array(pair, { error: 'poles must be an array of [re, im] pairs' }),
			gain: finite('gain')
		},
		strictIn('a "zpk" model')
	)
	.superRefine((m, ctx) => {
		const zi = conjugateIssue(m.zeros);
		if (zi !== null)
			ctx.addIssue({
				code: 'custom',
				path: ['zeros', zi],
				message: 'complex zero without its conjugate partner (coefficients must be real)'
			});
		const pi = conjugateIssue(m.poles);
		if (pi !== null)
			ctx.addIssue({
				code: 'custom',
				path: ['poles', pi],
				message: 'complex pole without its conjugate partner (coefficients must be real)'
			});
		if (m.zeros.length > m.poles.length)
			ctx.addIssue({
				code: 'custom',
				path: ['zeros'],
				message: `improper model: ${m.zeros.length} zeros but only ${m.poles.length} poles`
			});
	});

const ssSchema = z
	.strictObject(
		{ kind: z.literal('ss'), A: matrix('A'), B: matrix('B'), C: matrix('C'), D: matrix('D') },
		strictIn('an "ss" model')
	)
	.superRefine((m, ctx) => {
		const n = m.A.length;
		if (n === 0) {
			ctx.addIssue({
				code: 'custom',
				path: ['A'],
				message: 'A is empty: a state-space model needs at least one state'
			});
			return;
		}
		m.A.forEach((row, i) => {
			if (row.length !== n)
				ctx.addIssue({
					code: 'custom',
					path: ['A', i],
					message: `A is not square: row ${i} has ${row.length} entries, expected ${n}`
				});
		});
		if (m.B.length !== n || m.B.some((r) => r.length !== 1))
			ctx.addIssue({ code: 'custom', path: ['B'], message: `B must be ${n}x1 (single input) to match A` });
		if (m.C.length !== 1 || m.C[0].length !== n)
			ctx.addIssue({ code: 'custom', path: ['C'], message: `C must be 1x${n} (single output) to match A` });
		if (m.D.length !== 1 || m.D[0].length !== 1)
			ctx.addIssue({ code: 'custom', path: ['D'], message: 'D must be 1x1 (single input, single output)' });
	});

export const modelSchema = z.discriminatedUnion('kind', [tfSchema, zpkSchema, ssSchema], {
	error: (iss) =>
		iss.code === 'invalid_union'
			? 'model.kind must be one of "tf", "zpk", "ss"'
			: 'model must be an object with kind "tf", "zpk" or "ss"'
});

export type Model = z.infer<typeof modelSchema>;

/**
 * Spellings of an infinite upper sector bound. JSON has no Infinity, so a file writes null or "Infinity"
 * (or "inf"); a TypeScript caller may pass the number Infinity, which is also what the parsed check holds,
 * so parsing an already parsed check gives the same check.
 */
export const INFINITE_BOUND_SPELLINGS = [null, 'Infinity', 'inf'] as const;

const upperBound = z
	.union([z.number(), z.literal(Infinity), z.null(), z.literal('Infinity'), z.literal('inf')], {
		error: 'sector bound must be a finite number, or null / "Infinity" / "inf" for an infinite upper bound'
	})
	.transform((v) => (v === null || v === 'Infinity' || v === 'inf' ? Infinity : v));

const sectorSchema = z.tuple([finite('lower sector bound k1'), upperBound], {
	error: 'sector must be a pair [k1, k2]'
});

const circleCheck = z
	.strictObject({ type: z.literal('circle'), sector: sectorSchema }, strictIn('a "circle" check'))
	.superRefine((c, ctx) => {
		const [k1, k2] = c.sector;
		if (!(k1 < k2))
			ctx.addIssue({
				code: 'custom',
				path: ['sector'],
				message: `sector needs k1 < k2 (got k1 = ${k1}, k2 = ${k2})`
			});
	});

const popovCheck = z
	.strictObject({ type: z.literal('popov'), sector: sectorSchema }, strictIn('a "popov" check'))
	.superRefine((c, ctx) => {
		const [k1, k] = c.sector;
		if (k1 !== 0)
			ctx.addIssue({
				code: 'custom',
				path: ['sector', 0],
				message: 'the Popov criterion here takes a sector [0, k]: k1 must be 0'
			});
		if (!Number.isFinite(k))
			ctx.addIssue({
				code: 'custom',
				path: ['sector', 1],
				message: 'the Popov check needs a finite upper bound k (k = infinity is not covered)'
			});
		else if (!(k > 0))
			ctx.addIssue({
				code: 'custom',
				path: ['sector', 1],
				message: `the upper bound k must be positive (got ${k})`
			});
	});

const positiveRealCheck = z.strictObject(
	{ type: z.literal('positive-real') },
	strictIn('a "positive-real" check')
);
const maxSectorCheck = z.strictObject(
	{ type: z.literal('max-sector'), lower: finite('lower sector bound') },
	strictIn('a "max-sector" check')
);
const marginsCheck = z.strictObject(
	{
		type: z.literal('margins'),
		minGainMarginDb: finite('minGainMarginDb').optional(),
		minPhaseMarginDeg: finite('minPhaseMarginDeg').optional()
	},
	strictIn('a "margins" check')
);

export const checkSchema = z.discriminatedUnion(
	'type',
	[circleCheck, popovCheck, positiveRealCheck, maxSectorCheck, marginsCheck],
	{ error: 'check.type must be one of "circle", "popov", "positive-real", "max-sector", "margins"' }
);

export type Check = z.infer<typeof checkSchema>;

const operatingPoint = z.strictObject(
	{
		label: z.string({ error: 'label must be a string' }).min(1, 'label is empty'),
		model: modelSchema
	},
	strictIn('an operating point')
);

export const caseSchema = z
	.strictObject(
		{
			model: modelSchema.optional(),
			operatingPoints: z.array(operatingPoint, { error: 'operatingPoints must be an array' }).optional(),
			checks: z.array(checkSchema, { error: 'checks must be an array' }).min(1, 'checks is empty'),
			// Engine settings for this case: the time budget of each circle, Popov and largest-sector check.
			options: z
				.strictObject(
					{
						budgetSeconds: z
							.number({ error: 'budgetSeconds must be a number of seconds' })
							.positive('budgetSeconds must be above 0')
							.max(600, 'budgetSeconds is at most 600')
							.optional()
					},
					strictIn('options')
				)
				.optional()
		},
		strictIn('the case')
	)
	.superRefine((c, ctx) => {
		if (c.model === undefined && c.operatingPoints === undefined)
			ctx.addIssue({ code: 'custom', path: ['model'], message: 'give either model or operatingPoints' });
		if (c.model !== undefined && c.operatingPoints !== undefined)
			ctx.addIssue({
				code: 'custom',
				path: ['operatingPoints'],
				message: 'give model or operatingPoints, not both'
			});
		if (c.operatingPoints) {
			if (c.operatingPoints.length === 0)
				ctx.addIssue({ code: 'custom', path: ['operatingPoints'], message: 'operatingPoints is empty' });
			const seen = new Set<string>();
			c.operatingPoints.forEach((p, i) => {
				if (seen.has(p.label))
					ctx.addIssue({
						code: 'custom',
						path: ['operatingPoints', i, 'label'],
						message: `duplicate label "${p.label}"`
					});
				seen.add(p.label);
			});
		}
	});

export type Case = z.infer<typeof caseSchema>;

/**
 * A field path as a reader writes it: names joined by dots, list positions in brackets
 * ("checks[1].sector[1]", "operatingPoints[0].model.den[2]").
 */
export function formatPath(prefix: string, parts: readonly PropertyKey[]): string {
	let out = prefix;
	for (const p of parts) {
		if (typeof p === 'number') out += `[${p}]`;
		else out += out ? `.${String(p)}` : String(p);
	}
	return out;
}

/** zod issues as InputIssues; an unknown-field issue becomes one issue per field, at that field's path. */
export function toIssues(err: z.ZodError, prefix: string): InputIssue[] {
	const out: InputIssue[] = [];
	for (const i of err.issues) {
		if (i.code === 'unrecognized_keys') {
			for (const k of i.keys) out.push({ path: formatPath(prefix, [...i.path, k]), message: i.message });
		} else out.push({ path: formatPath(prefix, i.path), message: i.message });
	}
	return out;
}

/** Validate a model; `path` names it in messages ("model", "operatingPoints[2].model"). */
export function parseModel(input: unknown, path = 'model'): Model {
	const r = modelSchema.safeParse(input);
	if (!r.success) throw new ModelInputError(toIssues(r.error, path));
	return r.data;
}

/** Validate a check; `path` names it in messages ("check", "checks[1]"). */
export function parseCheck(input: unknown, path = 'check'): Check {
	const r = checkSchema.safeParse(input);
	if (!r.success) throw new ModelInputError(toIssues(r.error, path));
	return r.data;
}

export function parseCase(input: unknown): Case {
	const r = caseSchema.safeParse(input);
	if (!r.success) throw new ModelInputError(toIssues(r.error, ''));
	return r.data;
}
