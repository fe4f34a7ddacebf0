import { createHash } from 'node:crypto';
import {
	frequencyResponse,
	nyquistCurve,
	parseCheck,
	popovCurve,
	runCheckOnPoints,
	sectorGeometry,
	type CheckResult,
	type Model
} from '../../stability/index';
import { coveredPoints, testedCheck } from '../../verification/decision';
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
	/**
	 * Forbidden region of the circle criterion for the sector the verdict was decided on (the stated
	 * sector widened by the required margin, result.decidedWith).
	 */
	sector?: ReturnType<typeof sectorGeometry>;
	/** [w, re, im] triples, rounded to 6 significant digits. */
	points: {
		label: string;
		nyquist: [number, number, number][];
		/**
		 * G(jw) at this point's critical frequency exactly as the engine reported it (w is the result's
		 * criticalFrequency, not rounded), so a plot marks that frequency, not a nearby sample.
		 */
		critical?: { w: number; re: number; im: number } | null;
		/** The line is drawn for the decided k with the multiplier q the verdict used (or the best one found). */
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

/** `budgetSeconds`: the time budget of each engine check (LW_ENGINE_BUDGET_SECONDS for the worker). */
export function computeRun(inputs: RunInputs, budgetSeconds?: number): RunOutput {
	// Validated once, with the engine's spellings of an infinite bound ("Infinity", null); the engine entry
	// points below accept the parsed check as it is.
	const check = parseCheck(inputs.check, 'check');
	const points = coveredPoints(inputs.content?.operatingPoints, inputs.operatingPoints);
	const { decide, required } = testedCheck(check, inputs.requiredMargin);
	const agg = runCheckOnPoints(points, decide, { budgetSeconds });

	// The proved upper bound next to the required one: for a circle check, the largest k2 proved for the
	// same k1 (worst point); for Popov, the largest k the Popov search proves.
	let provedUpper: number | null = null;
	if (check.type === 'circle') {
		const ms = runCheckOnPoints(points, { type: 'max-sector', lower: check.sector[0] }, { budgetSeconds });
		provedUpper = num(ms.threshold);
	} else if (check.type === 'popov') {
		provedUpper = num(agg.threshold);
	} else if (check.type === 'max-sector') {
		provedUpper = num(agg.threshold);
	}

	const result: Record<string, unknown> = {
		check,
		decidedWith: decide,
		requiredMargin: inputs.requiredMargin,
		requiredUpper: json(
			required ?? (check.type === 'circle' || check.type === 'popov' ? check.sector[1] : null)
		),
		provedUpper: json(provedUpper),
		// Old name of provedUpper, kept for one engine version (readers of recorded runs use it).
		certifiedUpper: json(provedUpper),
		verdict: agg.verdict,
		criticalFrequency: agg.criticalFrequency ?? null,
		threshold: agg.threshold ?? (provedUpper === null ? null : json(provedUpper)),
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
	if (decide.type === 'circle') curves.sector = sectorGeometry(decide.sector[0], decide.sector[1]);
	const resultOf = (label: string) => agg.perPoint.find((p) => p.label === label);
	const focusOf = (label: string) => {
		const w = resultOf(label)?.criticalFrequency;
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
		const wc = resultOf(p.label)?.criticalFrequency;
		const critical =
			typeof wc === 'number' && Number.isFinite(wc) && wc > 0 ? frequencyResponse(p.model, wc) : null;
		const entry: RunCurves['points'][number] = { label: p.label, nyquist: ny, critical };
		if (decide.type === 'popov') {
			const own = resultOf(p.label);
			const q = num(own?.q ?? null) ?? num(own?.numbers?.q ?? null) ?? undefined;
			const pc = popovCurve(p.model, { maxPoints: 500, k: decide.sector[1], q });
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
