// Input validation for models, checks and cases. Every rejection names the field and the reason.
import { z } from 'zod';
import { dyadicOf, firstNonPositiveMinor, subDyadic } from './exact';

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

/**
 * Time fields every model kind may carry (absent: a continuous model in s, as before):
 * - sampleTime T (s): the model is discrete, coefficients in z (highest power first); state space x[k+1] = ...
 * - delay tau (s): a transport delay e^(-s tau) in series with a continuous model.
 * - discretize {method: "zoh", sampleTime}: a continuous model sampled through a zero-order hold (discrete.ts).
 * A JSON file cannot hold Infinity or NaN, but a TypeScript caller can: both are refused by name.
 */
const timeFields = {
	sampleTime: z
		.number({ error: 'sampleTime must be a number of seconds' })
		.refine((v) => Number.isFinite(v), 'sampleTime must be finite')
		.refine((v) => v > 0, 'sampleTime must be above 0 seconds')
		.optional(),
	delay: z
		.number({ error: 'delay must be a number of seconds' })
		.refine((v) => Number.isFinite(v), 'delay must be finite')
		.refine((v) => v >= 0, 'delay must not be negative')
		.optional(),
	discretize: z
		.strictObject(
			{
				method: z.literal('zoh', { error: 'discretize.method must be "zoh" (zero-order hold)' }),
				sampleTime: z
					.number({ error: 'sampleTime must be a number of seconds' })
					.refine((v) => Number.isFinite(v), 'sampleTime must be finite')
					.refine((v) => v > 0, 'sampleTime must be above 0 seconds')
			},
			strictIn('discretize')
		)
		.optional()
};

function timeIssues(
	m: { sampleTime?: number; delay?: number; discretize?: unknown },
	ctx: z.RefinementCtx
): void {
	if (m.delay !== undefined && m.delay > 0)
		ctx.addIssue({
			code: 'custom',
			path: ['delay'],
			message:
				'a transport delay above 0 s is not yet decided by this engine version (no check would be proved); give the delay as a rational model or leave it out'
		});
	if (m.sampleTime !== undefined && m.delay !== undefined)
		ctx.addIssue({
			code: 'custom',
			path: ['delay'],
			message:
				'a delay on a discrete model (sampleTime given) is not supported: write a delay of d samples as z^-d in the model'
		});
	if (m.discretize !== undefined && m.sampleTime !== undefined)
		ctx.addIssue({
			code: 'custom',
			path: ['discretize'],
			message: 'discretize converts a continuous model; this model is already discrete (sampleTime given)'
		});
	if (m.discretize !== undefined && m.delay !== undefined)
		ctx.addIssue({
			code: 'custom',
			path: ['discretize'],
			message: 'discretize with a delay is not supported (a sampled delay is not a rational model in z here)'
		});
}

const tfSchema = z
	.strictObject(
		{ kind: z.literal('tf'), num: coeffList('numerator'), den: coeffList('denominator'), ...timeFields },
		strictIn('a "tf" model')
	)
	.superRefine((m, ctx) => {
		timeIssues(m, ctx);
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
			gain: finite('gain'),
			...timeFields
		},
		strictIn('a "zpk" model')
	)
	.superRefine((m, ctx) => {
		timeIssues(m, ctx);
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
		{ kind: z.literal('ss'), A: matrix('A'), B: matrix('B'), C: matrix('C'), D: matrix('D'), ...timeFields },
		strictIn('an "ss" model')
	)
	.superRefine((m, ctx) => {
		timeIssues(m, ctx);
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
		// p inputs and p outputs (square plant): B is n x p, C is p x n, D is p x p; p = 1 is the scalar loop.
		const p = m.B[0]?.length ?? 0;
		if (m.B.length !== n || p === 0 || m.B.some((r) => r.length !== p))
			ctx.addIssue({
				code: 'custom',
				path: ['B'],
				message: `B must be ${n}xp: ${n} rows (one per state, to match A), all of one length p >= 1 (one column per input)`
			});
		else {
			if (m.C.length !== p || m.C.some((r) => r.length !== n))
				ctx.addIssue({
					code: 'custom',
					path: ['C'],
					message: `C must be ${p}x${n}: one row per output (the plant is square, ${p} input${p > 1 ? 's' : ''} and outputs) and one column per state`
				});
			if (m.D.length !== p || m.D.some((r) => r.length !== p))
				ctx.addIssue({ code: 'custom', path: ['D'], message: `D must be ${p}x${p} to match B and C` });
		}
		if (p > 1 && (m.delay !== undefined || m.discretize !== undefined || m.sampleTime !== undefined))
			ctx.addIssue({
				code: 'custom',
				path: [m.delay !== undefined ? 'delay' : m.discretize !== undefined ? 'discretize' : 'sampleTime'],
				message: 'a multivariable model (more than one input) is continuous and without delay in this engine'
			});
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

/** A check on the sector [0, k] with k finite and positive (Popov, Tsypkin). */
function zeroToKCheck<T extends 'popov' | 'tsypkin'>(type: T, criterion: string, infinity: string) {
	return z
		.strictObject({ type: z.literal(type), sector: sectorSchema }, strictIn(`a "${type}" check`))
		.superRefine((c, ctx) => {
			const [k1, k] = c.sector;
			if (k1 !== 0)
				ctx.addIssue({
					code: 'custom',
					path: ['sector', 0],
					message: `the ${criterion} criterion here takes a sector [0, k]: k1 must be 0`
				});
			if (!Number.isFinite(k))
				ctx.addIssue({
					code: 'custom',
					path: ['sector', 1],
					message: `the ${criterion} check needs a finite upper bound k${infinity}`
				});
			else if (!(k > 0))
				ctx.addIssue({
					code: 'custom',
					path: ['sector', 1],
					message: `the upper bound k must be positive (got ${k})`
				});
		});
}

const popovCheck = zeroToKCheck('popov', 'Popov', ' (k = infinity is not covered)');
// Tsypkin criterion for a discrete loop with a monotone time-invariant nonlinearity in [0, k] (checks/discrete.ts).
const tsypkinCheck = zeroToKCheck('tsypkin', 'Tsypkin', '');

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
	[circleCheck, popovCheck, positiveRealCheck, maxSectorCheck, marginsCheck, tsypkinCheck],
	{
		error: 'check.type must be one of "circle", "popov", "positive-real", "max-sector", "margins", "tsypkin"'
	}
);

export type Check = z.infer<typeof checkSchema>;

/**
 * The circle check of a multivariable loop (checks/mimo-circle.ts): sector {K1, K2} of symmetric p x p
 * matrices with K2 - K1 positive definite (decided exactly, Sylvester's criterion). Kept apart from
 * checkSchema, which requirements and specifications read (their matrix form is not supported yet).
 */
export const matrixCircleCheckSchema = z
	.strictObject(
		{
			type: z.literal('circle'),
			sector: z.strictObject({ K1: matrix('K1'), K2: matrix('K2') }, strictIn('a matrix sector'))
		},
		strictIn('a "circle" check')
	)
	.superRefine((c, ctx) => {
		const { K1, K2 } = c.sector;
		const p = K1.length;
		for (const [name, M] of [
			['K1', K1],
			['K2', K2]
		] as const) {
			if (M.length !== p || M.some((r) => r.length !== p)) {
				ctx.addIssue({
					code: 'custom',
					path: ['sector', name],
					message:
						name === 'K1'
							? `K1 must be square (${p} rows, each of ${p} entries)`
							: `K2 must be square and of the size of K1 (${p}x${p})`
				});
				return;
			}
			for (let i = 0; i < p; i++)
				for (let j = 0; j < i; j++)
					if (M[i][j] !== M[j][i]) {
						ctx.addIssue({
							code: 'custom',
							path: ['sector', name],
							message: `${name} must be symmetric (entry [${i}][${j}] = ${M[i][j]} but [${j}][${i}] = ${M[j][i]})`
						});
						return;
					}
		}
		if (p === 0) {
			ctx.addIssue({ code: 'custom', path: ['sector', 'K1'], message: 'K1 is empty' });
			return;
		}
		// Exactly: the entries are dyadic rationals, and so is their difference.
		const bad = firstNonPositiveMinor(
			K2.map((r, i) => r.map((v, j) => subDyadic(dyadicOf(v), dyadicOf(K1[i][j]))))
		);
		if (bad > 0)
			ctx.addIssue({
				code: 'custom',
				path: ['sector', 'K2'],
				message: `K2 - K1 must be positive definite (its leading principal minor of order ${bad} is not positive)`
			});
	});
export type MatrixCircleCheck = z.infer<typeof matrixCircleCheckSchema>;

const isMatrixSectorInput = (v: unknown): boolean =>
	typeof v === 'object' &&
	v !== null &&
	(v as { type?: unknown }).type === 'circle' &&
	typeof (v as { sector?: unknown }).sector === 'object' &&
	(v as { sector?: unknown }).sector !== null &&
	!Array.isArray((v as { sector?: unknown }).sector);

/** Every check the engine runs: checkSchema's, or a circle check with a matrix sector. */
export type EngineCheck = Check | MatrixCircleCheck;
export const engineCheckSchema = z.union([matrixCircleCheckSchema, checkSchema]);

export function isMatrixCircle(c: EngineCheck): c is MatrixCircleCheck {
	return c.type === 'circle' && !Array.isArray(c.sector);
}

/** A model in z: given with a sample time, or converted from s by a zero-order hold. */
export function isDiscrete(m: Model): boolean {
	return m.sampleTime !== undefined || m.discretize !== undefined;
}

const DISCRETE_CHECKS: readonly Check['type'][] = ['circle', 'max-sector', 'tsypkin'];

/**
 * Whether a check applies to a model's domain (s or z), as issues at the check's `type` field: a discrete
 * model takes the circle, largest-sector and Tsypkin checks; a continuous one every check but Tsypkin.
 */
export function inputsOf(m: Model): number {
	return m.kind === 'ss' ? (m.B[0]?.length ?? 1) : 1;
}

export function checkFitsModel(model: Model, check: EngineCheck): InputIssue[] {
	const p = inputsOf(model);
	if (isMatrixCircle(check)) {
		if (p === 1)
			return [
				{
					path: 'sector',
					message:
						'a matrix sector is for a multivariable ss model (B with p > 1 columns); for one input write [k1, k2]'
				}
			];
		if (check.sector.K1.length !== p)
			return [
				{
					path: 'sector.K1',
					message: `the model has ${p} inputs and outputs, so K1 and K2 must be ${p}x${p}`
				}
			];
		if (model.kind === 'ss' && model.D.some((r) => r.some((v) => v !== 0)))
			return [
				{
					path: 'type',
					message: 'the multivariable circle check needs D = 0 (no direct feedthrough) in this engine version'
				}
			];
		return [];
	}
	if (p > 1)
		return [
			{
				path: check.type === 'circle' ? 'sector' : 'type',
				message: `the model has ${p} inputs and outputs: only the circle check with a matrix sector {"K1": [[...]], "K2": [[...]]} applies to it`
			}
		];
	if (isDiscrete(model) && !DISCRETE_CHECKS.includes(check.type))
		return [
			{
				path: 'type',
				message: `the "${check.type}" check is for continuous models, and this model is discrete (sampleTime or discretize given): use ${DISCRETE_CHECKS.map((t) => `"${t}"`).join(', ')}${check.type === 'popov' ? ' ("tsypkin" is the discrete counterpart of Popov)' : ''}`
			}
		];
	if (!isDiscrete(model) && check.type === 'tsypkin')
		return [
			{
				path: 'type',
				message:
					'the "tsypkin" check is for discrete models (give sampleTime, coefficients in z, or discretize); for a continuous model use "popov"'
			}
		];
	return [];
}

// A case's check: the matrix form when its sector is an object, otherwise checkSchema (so its messages stay
// those of the scalar checks).
const caseCheck = z.unknown().transform((v, ctx): EngineCheck => {
	const r = (isMatrixSectorInput(v) ? matrixCircleCheckSchema : checkSchema).safeParse(v);
	if (r.success) return r.data;
	for (const i of r.error.issues) ctx.addIssue(i as never);
	return z.NEVER;
});

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
			checks: z.array(caseCheck, { error: 'checks must be an array' }).min(1, 'checks is empty'),
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
		const models = c.model ? [c.model] : (c.operatingPoints ?? []).map((p) => p.model);
		c.checks.forEach((ch, i) => {
			for (const m of models)
				for (const iss of checkFitsModel(m, ch)) {
					ctx.addIssue({ code: 'custom', path: ['checks', i, iss.path], message: iss.message });
					return;
				}
		});
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

/** Validate any check the engine runs, the matrix circle check included. */
export function parseEngineCheck(input: unknown, path = 'check'): EngineCheck {
	const r = (isMatrixSectorInput(input) ? matrixCircleCheckSchema : checkSchema).safeParse(input);
	if (!r.success) throw new ModelInputError(toIssues(r.error, path));
	return r.data;
}

export function parseCase(input: unknown): Case {
	const r = caseSchema.safeParse(input);
	if (!r.success) throw new ModelInputError(toIssues(r.error, ''));
	return r.data;
}
