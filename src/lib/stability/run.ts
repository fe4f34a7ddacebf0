// Entry points: run one check on one model, on several operating points, or a whole case.
import { runCircle } from './checks/circle-check';
import { runMargins } from './checks/margins';
import { runMaxSector } from './checks/max-sector';
import { runPopov } from './checks/popov';
import { runPositiveReal } from './checks/positive-real';
import { preparePlant } from './model';
import { type Check, type Model, ModelInputError, checkSchema, modelSchema, parseCase } from './schema';
import type { CheckResult, Verdict } from './types';

function ensureModel(model: Model): Model {
	const r = modelSchema.safeParse(model);
	if (!r.success)
		throw new ModelInputError(
			r.error.issues.map((i) => ({ path: ['model', ...i.path.map(String)].join('.'), message: i.message }))
		);
	return r.data;
}

function ensureCheck(check: Check): Check {
	const r = checkSchema.safeParse(check);
	if (!r.success)
		throw new ModelInputError(
			r.error.issues.map((i) => ({ path: ['check', ...i.path.map(String)].join('.'), message: i.message }))
		);
	return r.data;
}

// Parsed models by input object, so repeated checks on the same model reuse its exact polynomials.
const validated = new WeakMap<object, Model>();

/** Run one check. Inputs are validated (ModelInputError on bad input); results are plain data. */
export function runCheck(modelIn: Model, checkIn: Check): CheckResult {
	let model = typeof modelIn === 'object' && modelIn !== null ? validated.get(modelIn) : undefined;
	if (!model) {
		model = ensureModel(modelIn);
		if (typeof modelIn === 'object' && modelIn !== null) validated.set(modelIn, model);
	}
	const check = ensureCheck(checkIn);
	const plant = preparePlant(model);
	switch (check.type) {
		case 'circle':
			return runCircle(plant, check.sector[0], check.sector[1]);
		case 'popov':
			return runPopov(plant, check.sector[1]);
		case 'positive-real':
			return runPositiveReal(plant);
		case 'max-sector':
			return runMaxSector(plant, check.lower);
		case 'margins':
			return runMargins(plant, check.minGainMarginDb, check.minPhaseMarginDeg);
	}
}

const verdictRank: Record<Verdict, number> = { fail: 0, inconclusive: 1, pass: 2 };
const classRank = { neither: 0, PR: 1, SPR: 2 } as const;

function num(v: unknown): number {
	if (v === 'Infinity') return Infinity;
	if (v === '-Infinity') return -Infinity;
	return typeof v === 'number' ? v : NaN;
}

/** Lower is worse: verdict first, then the check's own figure of merit. */
function score(r: CheckResult): [number, number] {
	let merit: number;
	switch (r.type) {
		case 'max-sector':
		case 'popov':
			merit = num(r.threshold);
			break;
		case 'positive-real':
			merit = classRank[r.class ?? 'neither'] * 1e6 + num(r.margin);
			break;
		default:
			merit = num(r.margin);
	}
	return [verdictRank[r.verdict], Number.isNaN(merit) ? -Infinity : merit];
}

/**
 * Run a check at every operating point. The aggregate verdict passes only when every point passes; the
 * aggregate carries the worst point's numbers and names it (DOMAIN.md section 3).
 */
export function runCheckOnPoints(
	points: { label: string; model: Model }[],
	check: Check
): CheckResult & { worstPoint: string; perPoint: (CheckResult & { label: string })[] } {
	if (!Array.isArray(points) || points.length === 0)
		throw new ModelInputError([{ path: 'operatingPoints', message: 'operatingPoints is empty' }]);
	const perPoint = points.map((p) => ({ label: p.label, ...runCheck(p.model, check) }));
	let worst = perPoint[0];
	for (const r of perPoint.slice(1)) {
		const a = score(r);
		const b = score(worst);
		if (a[0] < b[0] || (a[0] === b[0] && a[1] < b[1])) worst = r;
	}
	const verdict: Verdict = perPoint.some((r) => r.verdict === 'fail')
		? 'fail'
		: perPoint.some((r) => r.verdict === 'inconclusive')
			? 'inconclusive'
			: 'pass';
	const { label, ...rest } = worst;
	return {
		...rest,
		verdict,
		explanation: `${perPoint.length} operating points; worst is "${label}": ${worst.explanation}`,
		worstPoint: label,
		perPoint
	};
}

/** Validate and run a whole case ({ model | operatingPoints, checks }); used by the CLI. */
export function analyzeCase(input: unknown): { results: CheckResult[] } {
	const c = parseCase(input);
	if (c.operatingPoints) {
		const pts = c.operatingPoints;
		return { results: c.checks.map((ch) => runCheckOnPoints(pts, ch)) };
	}
	const model = c.model!;
	return { results: c.checks.map((ch) => runCheck(model, ch)) };
}
