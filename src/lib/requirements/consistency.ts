// Do the numbers in a requirement's statement agree with its stability specification? Pure.
// A statement that says "±6 dB" while the specification checks the sector [0.5, 1.8] is a classic
// review finding: the text and the analysis then verify different things.
import { intervalsIn } from './quality';
import { dbOfGain, type SpecCheck } from './templates';

export interface ConsistencyFinding {
	kind: 'mismatch' | 'unstated';
	message: string;
	span?: [number, number];
}

export interface Consistency {
	status: 'consistent' | 'mismatch' | 'unstated' | 'no-spec';
	findings: ConsistencyFinding[];
	/** Human-readable list of the statement numbers that agree with the specification. */
	matched: string[];
}

export interface SpecForConsistency {
	check: SpecCheck | { type: string; [k: string]: unknown };
	requiredMargin?: number | null;
}

const NUM = '[-+−]?\\d+(?:\\.\\d+)?';
const toNum = (s: string) => Number(s.replace('−', '-').replace(/^\+/, ''));
const parseBound = (s: string) => (/^[-+]?(?:∞|inf|infinity)$/i.test(s.trim()) ? Infinity : toNum(s.trim()));

// Tolerances: sector bounds are usually written with 3 decimals; dB figures with 1.
const SECTOR_ABS = 0.0015;
const SECTOR_REL = 0.001;
const DB_TOL = 0.05;
const DEG_TOL = 0.05;
const sameBound = (a: number, b: number) =>
	a === b ||
	(Number.isFinite(a) &&
		Number.isFinite(b) &&
		Math.abs(a - b) <= Math.max(SECTOR_ABS, SECTOR_REL * Math.abs(b)));
const fmt = (v: number) => (Number.isFinite(v) ? String(+v.toPrecision(6)) : '∞');

interface Mention {
	start: number;
	end: number;
	text: string;
}

function mentions(text: string, re: RegExp): (Mention & { m: RegExpMatchArray })[] {
	const out: (Mention & { m: RegExpMatchArray })[] = [];
	for (const m of text.matchAll(re)) {
		if (m.index === undefined) continue;
		out.push({ start: m.index, end: m.index + m[0].length, text: m[0], m });
	}
	return out;
}

/** Compare the numbers of a statement with a specification. */
export function checkConsistency(
	statement: string,
	spec: SpecForConsistency | null | undefined
): Consistency {
	if (!spec) return { status: 'no-spec', findings: [], matched: [] };
	const text = statement ?? '';
	const findings: ConsistencyFinding[] = [];
	const matched: string[] = [];
	const mismatch = (m: Mention, message: string) =>
		findings.push({ kind: 'mismatch', message, span: [m.start, m.end] });

	const intervals = intervalsIn(text).filter((i) => i.numeric);
	const plusMinusDb = mentions(text, new RegExp(`(?:±|\\+/-|\\+-)\\s?(${NUM})\\s?dB\\b`, 'g'));
	const plainDb = mentions(text, new RegExp(`(?<![±/\\-+\\d.])(${NUM})\\s?dB\\b`, 'g')).filter(
		(d) => !plusMinusDb.some((p) => p.start <= d.start && d.end <= p.end)
	);
	const percentPair = mentions(text, new RegExp(`(${NUM})\\s?%\\s?/\\s?(\\+?\\d+(?:\\.\\d+)?)\\s?%`, 'g'));
	const lonePercent = mentions(text, new RegExp(`(?<![\\d.])(${NUM})\\s?(?:%|per\\s?cent)`, 'g')).filter(
		(p) => !percentPair.some((q) => q.start <= p.start && p.end <= q.end)
	);
	const degrees = mentions(text, new RegExp(`(${NUM})\\s?(?:°|deg(?:rees?)?\\b)`, 'g'));

	const check = spec.check as SpecCheck;
	if (check.type === 'circle' || check.type === 'popov') {
		const [k1, k2] = check.sector.map((v) => (v === null ? Infinity : Number(v))) as [number, number];
		// A sector still being typed (a bound empty or not a number) has nothing to compare yet.
		if (Number.isNaN(k1) || Number.isNaN(k2)) return { status: 'no-spec', findings: [], matched: [] };
		const sectorText = `[${fmt(k1)}, ${fmt(k2)}]`;
		for (const i of intervals) {
			const [a, b] = i.bounds.map(parseBound);
			if (sameBound(a, k1) && sameBound(b, k2)) matched.push(`${i.text} = sector ${sectorText}`);
			else mismatch(i, `The statement says ${i.text}; the specification checks the sector ${sectorText}.`);
		}
		for (const d of plusMinusDb) {
			const db = Math.abs(toNum(d.m[1]));
			const up = Number.isFinite(k2) && k2 > 0 ? dbOfGain(k2) : NaN;
			const down = k1 > 0 ? -dbOfGain(k1) : NaN;
			if (Math.abs(up - db) <= DB_TOL && Math.abs(down - db) <= DB_TOL)
				matched.push(`${d.text} = sector ${sectorText}`);
			else
				mismatch(
					d,
					`The statement says ${d.text}; the sector ${sectorText} is ${k1 > 0 ? fmt(+dbOfGain(k1).toFixed(2)) : '−∞'} dB / ` +
						`${Number.isFinite(k2) ? '+' + fmt(+dbOfGain(k2).toFixed(2)) : '+∞'} dB around unit gain.`
				);
		}
		for (const p of percentPair) {
			const lo = 1 - Math.abs(toNum(p.m[1])) / 100;
			const hi = 1 + Math.abs(toNum(p.m[2])) / 100;
			if (sameBound(lo, k1) && sameBound(hi, k2)) matched.push(`${p.text} = sector ${sectorText}`);
			else
				mismatch(
					p,
					`The statement says ${p.text}, i.e. [${fmt(lo)}, ${fmt(hi)}]; the specification checks ${sectorText}.`
				);
		}
		for (const p of lonePercent) {
			const v = toNum(p.m[1]);
			if (spec.requiredMargin == null) {
				mismatch(p, `The statement names ${p.text}, but the specification has no required margin.`);
			} else if (Math.abs(v - spec.requiredMargin * 100) <= 1e-6) matched.push(`${p.text} = required margin`);
			else
				mismatch(
					p,
					`The statement names ${p.text}; the specification requires a margin of ${fmt(spec.requiredMargin * 100)} %.`
				);
		}
		if (plainDb.length && !plusMinusDb.length) {
			for (const d of plainDb) {
				mismatch(
					d,
					`The statement names ${d.text} but the specification is a sector check, not a gain margin.`
				);
			}
		}
		if (!matched.length && !findings.length) {
			findings.push({
				kind: 'unstated',
				message: `The statement does not name the sector ${sectorText} it is checked against.`
			});
		}
	} else if (check.type === 'margins') {
		for (const d of [...plainDb, ...plusMinusDb]) {
			const v = Math.abs(toNum(d.m[1]));
			if (check.minGainMarginDb == null)
				mismatch(d, `The statement names ${d.text}; the specification sets no gain margin.`);
			else if (Math.abs(v - check.minGainMarginDb) <= DB_TOL) matched.push(`${d.text} = minimum gain margin`);
			else
				mismatch(
					d,
					`The statement says ${d.text}; the specification's minimum gain margin is ${fmt(check.minGainMarginDb)} dB.`
				);
		}
		for (const g of degrees) {
			const v = toNum(g.m[1]);
			if (check.minPhaseMarginDeg == null)
				mismatch(g, `The statement names ${g.text}; the specification sets no phase margin.`);
			else if (Math.abs(v - check.minPhaseMarginDeg) <= DEG_TOL)
				matched.push(`${g.text} = minimum phase margin`);
			else
				mismatch(
					g,
					`The statement says ${g.text}; the specification's minimum phase margin is ${fmt(check.minPhaseMarginDeg)}°.`
				);
		}
		for (const i of intervals)
			mismatch(i, `The statement names the sector ${i.text}, but the specification checks margins.`);
		if (!matched.length && !findings.length) {
			findings.push({
				kind: 'unstated',
				message: 'The statement does not name the margins it is checked against.'
			});
		}
	} else {
		for (const i of intervals)
			mismatch(i, `The statement names the sector ${i.text}, but the specification checks ${check.type}.`);
	}

	const status = findings.some((f) => f.kind === 'mismatch')
		? 'mismatch'
		: findings.length
			? 'unstated'
			: 'consistent';
	return { status, findings, matched };
}
