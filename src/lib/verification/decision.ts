import { ModelInputError, sectorGeometry, type Check, type Model } from '../stability/index';

type SectorGeometry = ReturnType<typeof sectorGeometry>;

// What a run decides: which operating points, and on which sector.
// The sector a verdict is decided on. A specification states a sector [k1, k2] and may require a margin
// on top of it: the analysis then proves the wider sector [k1, k2 (1 + margin)], so that the proved
// upper bound exceeds the stated one by that fraction. The worker decides with this check, the plots
// draw its region, the evidence comparison samples against it; nothing else widens a sector.
// Pure and browser-safe.

/** The check the engine decides with, and the widened upper bound (null when no margin applies). */
export function testedCheck(
	check: Check,
	margin: number | null | undefined
): { decide: Check; required: number | null } {
	if ((check.type === 'circle' || check.type === 'popov') && widens(check.sector[1], margin)) {
		const required = testedUpper(check.sector[1], margin);
		return { decide: { ...check, sector: [check.sector[0], required] } as Check, required };
	}
	return { decide: check, required: null };
}

const widens = (k2: number, margin: number | null | undefined): margin is number =>
	margin !== null && margin !== undefined && margin > 0 && Number.isFinite(k2);

/** The upper bound a sector is tested on: k2 (1 + margin) with a positive margin, else k2. */
export function testedUpper(k2: number, margin: number | null | undefined): number {
	return widens(k2, margin) ? k2 * (1 + margin) : k2;
}

/**
 * The operating points a specification covers (all of them when it names none); a named point the
 * version lacks is an input error, never silently skipped.
 */
export function coveredPoints(
	all: { label: string; model: Model }[] | null | undefined,
	labels: string[] | null | undefined
): { label: string; model: Model }[] {
	if (!Array.isArray(all) || all.length === 0)
		throw new ModelInputError([
			{ path: 'operatingPoints', message: 'the model version has no operating point' }
		]);
	if (!labels || !labels.length) return all;
	const missing = labels.filter((l) => !all.some((p) => p.label === l));
	if (missing.length)
		throw new ModelInputError([
			{
				path: 'operatingPoints',
				message: `the specification covers operating points this version lacks: ${missing.join(', ')}`
			}
		]);
	return all.filter((p) => labels.includes(p.label));
}

/** A sector bound as stored in JSON (null or "Infinity" for an infinite upper bound) as a number. */
export function boundOf(v: unknown): number {
	if (v === null || v === 'Infinity' || v === 'inf') return Infinity;
	if (v === '-Infinity') return -Infinity;
	return typeof v === 'number' ? v : NaN;
}

/** The sector of a stored circle or Popov check, or null for checks without one. */
export function sectorOf(check: unknown): [number, number] | null {
	const c = check as { type?: unknown; sector?: unknown } | null | undefined;
	if (!c || (c.type !== 'circle' && c.type !== 'popov') || !Array.isArray(c.sector)) return null;
	const s: [number, number] = [boundOf(c.sector[0]), boundOf(c.sector[1])];
	return Number.isNaN(s[0]) || Number.isNaN(s[1]) ? null : s;
}

/** A bound as people read it: six significant digits (1.8 x 1.2 shows as 2.16, not 2.1599999999999997). */
export function boundText(v: number): string {
	return v === Infinity ? '∞' : String(Number(v.toPrecision(6)));
}

export function sectorText(s: [number, number]): string {
	return `[${boundText(s[0])}, ${boundText(s[1])}]`;
}

export interface DecisionRegion {
	/** 'tested': what the verdict was decided on; 'stated': the requirement's own sector, for comparison. */
	role: 'tested' | 'stated';
	sector: [number, number];
	/** The circle criterion's forbidden region of the sector (Khalil, 3rd ed., section 7.1). */
	geometry: SectorGeometry;
	label: string;
}

const fmtPercent = (x: number) => String(Number((x * 100).toPrecision(6)));

/**
 * The region a verdict was tested against and, when a margin widened it, the stated one beside it, each
 * labelled with its numbers. `stated` is the specification's check, `tested` the check decided with
 * (a stored result's decidedWith, or testedCheck(...).decide). A Popov sector's region here is that of
 * the multiplier q = 0 (Re G > -1/k), which is what a sampled check can test.
 */
export function decisionRegions(
	stated: unknown,
	tested: unknown,
	margin: number | null | undefined
): DecisionRegion[] {
	const s = sectorOf(stated);
	const t = sectorOf(tested ?? stated);
	if (!s || !t) return [];
	const geo = (x: [number, number]) =>
		(stated as { type: string }).type === 'popov' ? sectorGeometry(0, x[1]) : sectorGeometry(x[0], x[1]);
	const widened = s[0] !== t[0] || s[1] !== t[1];
	const out: DecisionRegion[] = [
		{
			role: 'tested',
			sector: t,
			geometry: geo(t),
			label: widened
				? `tested sector ${sectorText(t)} (stated ${sectorText(s)} with a ${fmtPercent(margin ?? 0)} % margin)`
				: `tested sector ${sectorText(t)}`
		}
	];
	if (widened)
		out.push({ role: 'stated', sector: s, geometry: geo(s), label: `stated sector ${sectorText(s)}` });
	return out;
}

/**
 * The critical frequency as every surface writes it (result text, plot marker, export): the engine's
 * number to six significant digits, so the same value reads the same everywhere.
 */
export function frequencyText(w: number): string {
	return `${Number(w.toPrecision(6))} rad/s`;
}
