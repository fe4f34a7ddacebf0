// Entry points: run one check on one model, on several operating points, or a whole case.
import { runCircle } from './checks/circle-check';
import { runMargins } from './checks/margins';
import { runMaxSector } from './checks/max-sector';
import { runPopov } from './checks/popov';
import { runPositiveReal } from './checks/positive-real';
import { preparePlant } from './model';
import { maxSectorLimits, popovAfter, preflight } from './preflight';
import {
	type Check,
	type EngineCheck,
	type Model,
	ModelInputError,
	checkFitsModel,
	isDiscrete,
	isMatrixCircle,
	parseCase,
	parseEngineCheck,
	parseModel
} from './schema';
import { runMimoCircle } from './checks/mimo-circle';
import { runDiscreteCircle, runDiscreteMaxSector, runTsypkin } from './checks/discrete';
import { discreteModel } from './discrete-model';
import { type EngineOptions, withBudget } from './budget';
import { budgetResult } from './checks/circle-check';
import type { CheckResult, Verdict } from './types';

// Parsed models by input object, so repeated checks on the same model reuse its exact polynomials.
const validated = new WeakMap<object, Model>();

function validModel(modelIn: unknown, path: string): Model {
	const key = typeof modelIn === 'object' && modelIn !== null ? modelIn : null;
	const hit = key ? validated.get(key) : undefined;
	if (hit) return hit;
	const model = parseModel(modelIn, path);
	if (key) validated.set(key, model);
	// The parsed copy is its own key too, so a caller passing it back is not parsed again.
	validated.set(model, model);
	return model;
}

/**
 * One check on a validated model: the preflight (well-posedness, hidden modes; preflight.ts) first, then
 * the criterion. Every entry point below validates its input once and then comes here.
 */
function runValidated(model: Model, check: EngineCheck, opts: EngineOptions): CheckResult {
	// One budget over the whole check: the model's exact polynomials and the preflight's exact gcd count
	// too, so no input can hold a worker past it (the criteria's own budgets then keep this deadline).
	return withBudget(
		opts.budgetSeconds,
		() => runBudgeted(model, check, opts),
		(e) =>
			budgetResult(
				check.type,
				e.message,
				'The check stopped at its time budget before it reached a decision; nothing is claimed for this model and sector.',
				{}
			)
	);
}

function runBudgeted(model: Model, check: EngineCheck, opts: EngineOptions): CheckResult {
	if (isMatrixCircle(check)) {
		if (model.kind !== 'ss') throw new ModelInputError(checkFitsModel(model, check));
		return runMimoCircle(model.A, model.B, model.C, check.sector, opts);
	}
	if (isDiscrete(model)) return runDiscrete(model, check, opts);
	const plant = preparePlant(model);
	const refused = preflight(plant, model, check);
	if (refused) return refused;
	switch (check.type) {
		case 'circle':
			return runCircle(plant, check.sector[0], check.sector[1], opts);
		case 'popov':
			return popovAfter(plant, runPopov(plant, check.sector[1], opts));
		case 'positive-real':
			return runPositiveReal(plant);
		case 'max-sector':
			return runMaxSector(plant, check.lower, maxSectorLimits(plant, check.lower), opts);
		case 'margins':
			return runMargins(plant, check.minGainMarginDb, check.minPhaseMarginDeg);
		case 'tsypkin':
			throw new ModelInputError(checkFitsModel(model, check));
	}
}

/** A check on a discrete model (checkFitsModel has let only the discrete checks through). */
function runDiscrete(modelIn: Model, check: Check, opts: EngineOptions): CheckResult {
	const { model, conversion } = discreteModel(modelIn);
	const r = ((): CheckResult => {
		switch (check.type) {
			case 'circle':
				return runDiscreteCircle(model, check.sector[0], check.sector[1], opts);
			case 'max-sector':
				return runDiscreteMaxSector(model, check.lower, opts);
			case 'tsypkin':
				return runTsypkin(model, check.sector[1], opts);
			default:
				throw new ModelInputError(checkFitsModel(modelIn, check));
		}
	})();
	return conversion ? { ...r, numbers: { ...r.numbers, ...conversion } } : r;
}

function fits(model: Model, check: EngineCheck, path: string): void {
	const issues = checkFitsModel(model, check);
	if (issues.length)
		throw new ModelInputError(issues.map((i) => ({ path: `${path}.${i.path}`, message: i.message })));
}

/**
 * Run one check. Inputs are validated (ModelInputError on bad input); results are plain data.
 * `opts.budgetSeconds` bounds the circle, Popov and largest-sector checks (budget.ts, default 5 s).
 */
export function runCheck(modelIn: Model, checkIn: EngineCheck, opts: EngineOptions = {}): CheckResult {
	const model = validModel(modelIn, 'model');
	const check = parseEngineCheck(checkIn, 'check');
	fits(model, check, 'check');
	return runValidated(model, check, opts);
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
		case 'tsypkin':
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
 * aggregate carries the worst point's numbers and names it.
 */
export function runCheckOnPoints(
	points: { label: string; model: Model }[],
	check: EngineCheck,
	opts: EngineOptions = {}
): CheckResult & { worstPoint: string; perPoint: (CheckResult & { label: string })[] } {
	if (!Array.isArray(points) || points.length === 0)
		throw new ModelInputError([{ path: 'operatingPoints', message: 'operatingPoints is empty' }]);
	const parsed = parseEngineCheck(check, 'check');
	const models = points.map((p, i) => validModel(p.model, `operatingPoints[${i}].model`));
	for (const m of models) fits(m, parsed, 'check');
	return onPoints(points, models, parsed, opts);
}

function onPoints(
	points: { label: string }[],
	models: Model[],
	check: EngineCheck,
	opts: EngineOptions
): CheckResult & { worstPoint: string; perPoint: (CheckResult & { label: string })[] } {
	const perPoint = points.map((p, i) => ({ label: p.label, ...runValidated(models[i], check, opts) }));
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
	// Validated once here (a second pass would see the parsed values, not the file's spellings).
	const c = parseCase(input);
	const opts: EngineOptions = { budgetSeconds: c.options?.budgetSeconds };
	if (c.operatingPoints) {
		const pts = c.operatingPoints;
		const models = pts.map((p) => p.model);
		return { results: c.checks.map((ch) => onPoints(pts, models, ch, opts)) };
	}
	const model = c.model!;
	return { results: c.checks.map((ch) => runValidated(model, ch, opts)) };
}
