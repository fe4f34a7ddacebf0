import { createHash } from 'node:crypto';
import {
	ModelInputError,
	nyquistCurve,
	parseCheck,
	popovCurve,
	runCheckOnPoints,
	sectorGeometry,
	type Check,
	type CheckResult,
	type Model
} from '../../stability/index';
import { canonical } from '../audit';

// One analysis run: the specification's check on every covered operating point of a model version.
// Pure (no I/O) so the worker, the bench and unit tests share it.

export interface RunInputs {
	check: unknown;
	requiredMargin: number | null;
	/** null: every operating point of the version */
	operatingPoints: string[] | null;
	content: { operatingPoints: { label: string; model: Model }[] };
}

export interface RunCurves {
	/** Forbidden region of the circle criterion for the required sector (plots draw it). */
	sector?: ReturnType<typeof sectorGeometry>;
	/** [w, re, im] triples, rounded to 6 significant digits. */
	points: {
		label: string;
		nyquist: [number, number, number][];
		popov?: { xy: [number, number][]; line: { k: number; q: number } | null };
	}[];
}

export interface RunOutput {
	verdict: 'pass' | 'fail' | 'inconclusive';
	result: Record<string, unknown>;
	worstPoint: string;
	curves: RunCurves;
	outputHash: string;
}

const round = (x: number) => (Number.isFinite(x) ? Number(x.toPrecision(6)) : x);

function num(v: unknown): number | null {
	if (typeof v === 'number') return v;
	if (v === 'Infinity') return Infinity;
	if (v === '-Infinity') return -Infinity;
	return null;
}

const json = (x: number | null) => (x === Infinity ? 'Infinity' : x === -Infinity ? '-Infinity' : x);

/** The check to decide with: a required margin widens the upper sector bound (k2 -> k2 (1 + margin)). */
function effectiveCheck(check: Check, margin: number | null): { decide: Check; required: number | null } {
	if (margin === null || !(margin > 0)) return { decide: check, required: null };
	if ((check.type === 'circle' || check.type === 'popov') && Number.isFinite(check.sector[1])) {
		const required = check.sector[1] * (1 + margin);
		return { decide: { ...check, sector: [check.sector[0], required] } as Check, required };
	}
	return { decide: check, required: null };
}

function brief(r: CheckResult & { label: string }) {
	return {
		label: r.label,
		verdict: r.verdict,
		criticalFrequency: r.criticalFrequency ?? null,
		margin: r.margin ?? null,
		threshold: r.threshold ?? null,
		explanation: r.explanation,
		notApplicable: r.notApplicable ?? null
	};
}

/**
 * The run is "criterion not applicable" when some operating point failed a precondition (the engine's
 * notApplicable) and no point violated the criterion's condition itself (every failing point is one
 * whose precondition failed); that point is named.
 */
function notApplicableOf(perPoint: (CheckResult & { label: string })[]) {
	const marked = perPoint.find((p) => p.verdict !== 'pass' && p.notApplicable);
	if (!marked || perPoint.some((p) => p.verdict === 'fail' && !p.notApplicable)) return null;
	return { ...marked.notApplicable!, point: perPoint.length > 1 ? marked.label : null };
}

export function computeRun(inputs: RunInputs): RunOutput {
	const check = parseCheck(inputs.check);
	const all = inputs.content?.operatingPoints;
	if (!Array.isArray(all) || all.length === 0)
		throw new ModelInputError([
			{ path: 'operatingPoints', message: 'the model version has no operating point' }
		]);
	let points = all;
	if (inputs.operatingPoints && inputs.operatingPoints.length) {
		const missing = inputs.operatingPoints.filter((l) => !all.some((p) => p.label === l));
		if (missing.length)
			throw new ModelInputError([
				{
					path: 'operatingPoints',
					message: `the specification covers operating points this version lacks: ${missing.join(', ')}`
				}
			]);
		points = all.filter((p) => inputs.operatingPoints!.includes(p.label));
	}
	const { decide, required } = effectiveCheck(check, inputs.requiredMargin);
	const agg = runCheckOnPoints(points, decide);

	// The certified upper bound next to the required one: for a circle check, the largest k2 certified
	// for the same k1 (worst point); for Popov, the largest k the Popov search certifies.
	let certifiedUpper: number | null = null;
	if (check.type === 'circle') {
		const ms = runCheckOnPoints(points, { type: 'max-sector', lower: check.sector[0] });
		certifiedUpper = num(ms.threshold);
	} else if (check.type === 'popov') {
		certifiedUpper = num(agg.threshold);
	} else if (check.type === 'max-sector') {
		certifiedUpper = num(agg.threshold);
	}

	const result: Record<string, unknown> = {
		check,
		decidedWith: decide,
		requiredMargin: inputs.requiredMargin,
		requiredUpper: json(
			required ?? (check.type === 'circle' || check.type === 'popov' ? check.sector[1] : null)
		),
		certifiedUpper: json(certifiedUpper),
		verdict: agg.verdict,
		criticalFrequency: agg.criticalFrequency ?? null,
		threshold: agg.threshold ?? (certifiedUpper === null ? null : json(certifiedUpper)),
		margin: agg.margin ?? null,
		q: agg.q ?? null,
		class: agg.class ?? null,
		numbers: agg.numbers,
		explanation: agg.explanation,
		reason: agg.reason ?? null,
		assumptions: agg.assumptions ?? null,
		notApplicable: notApplicableOf(agg.perPoint),
		perPoint: agg.perPoint.map(brief)
	};

	const curves: RunCurves = { points: [] };
	if (check.type === 'circle') curves.sector = sectorGeometry(check.sector[0], check.sector[1]);
	const focusOf = (label: string) => {
		const w = agg.perPoint.find((p) => p.label === label)?.criticalFrequency;
		return typeof w === 'number' && w > 0 ? [w] : [];
	};
	// Curves for at most 12 points: the worst first.
	const ordered = [...points]
		.sort((a, b) => (a.label === agg.worstPoint ? -1 : b.label === agg.worstPoint ? 1 : 0))
		.slice(0, 12);
	for (const p of ordered) {
		const ny = nyquistCurve(p.model, { maxPoints: 500, focus: focusOf(p.label) }).map(
			(c) => [round(c.w), round(c.re), round(c.im)] as [number, number, number]
		);
		const entry: RunCurves['points'][number] = { label: p.label, nyquist: ny };
		if (check.type === 'popov') {
			const pc = popovCurve(p.model, { maxPoints: 500, k: check.sector[1] });
			entry.popov = {
				xy: pc.points.map((c) => [round(c.x), round(c.y)] as [number, number]),
				line: pc.line ? { k: pc.line.k, q: pc.line.q } : null
			};
		}
		curves.points.push(entry);
	}
	const outputHash = createHash('sha256')
		.update(canonical({ verdict: agg.verdict, result, worstPoint: agg.worstPoint }), 'utf8')
		.digest('hex');
	return { verdict: agg.verdict, result, worstPoint: agg.worstPoint, curves, outputHash };
}
