// Linear gain range: the real gains k for which the closed loop with 1 + k G is stable, i.e. D + k N is
// Hurwitz. Roots of D + k N move continuously with k and can only leave the open left half-plane by
// crossing the imaginary axis or by escaping through infinity (Evans root locus; e.g. Franklin, Powell &
// Emami-Naeini, Feedback Control of Dynamic Systems, ch. 5). A crossing at s = jw needs D(jw) + k N(jw) = 0,
// so k = -D(jw)/N(jw) must be real: w = 0, or Im[D(jw) N(-jw)] = w J(w^2) = 0; an escape through infinity
// happens where the leading coefficient d_n + k n_n vanishes. Between consecutive candidate gains the
// Hurwitz property is constant, so one exact test per interval decides it.
import {
	type DPoly,
	type Dyadic,
	addD,
	derivInt,
	divExact,
	dyadicOf,
	dyadicToNumber,
	gcdPoly,
	isZero,
	oddImagPart,
	primitive,
	scaleD
} from '../exact';
import { certifiedHurwitz } from '../certify';
import { divC, evalJw, toFloat, toFloatCommon } from '../fpoly';
import { exactRatioAtX, ratioToNumber } from '../frequency';
import { allPositiveRoots, refineRoot } from '../isolate';
import type { Plant } from '../model';
import { positiveRealRoots } from '../roots';

export interface GainInterval {
	low: number;
	high: number;
	/** Frequency (rad/s) at which the root locus crosses the axis at each end; null at infinity / no crossing. */
	lowFrequency: number | null;
	highFrequency: number | null;
}

export function hurwitzAtGain(plant: Plant, k: number): boolean {
	const p = isZero(plant.Ns) ? plant.Ds : addD(plant.Ds, scaleD(plant.Ns, dyadicOf(k)));
	if (p.c.length - 1 < plant.order) return false;
	const h = certifiedHurwitz(p);
	return h.hurwitz && !h.undecided;
}

/**
 * The x = w^2 > 0 where the root locus of D + k N can cross the imaginary axis at a finite gain: the roots of
 * J (Im[D(jw) N(-jw)] = w J(w^2)) isolated exactly
 * (Descartes / Collins-Akritas, isolate.ts) and refined by exact bisection to a relative width of 1e-15, each
 * returned as the dyadic midpoint of its bracket. When isolation exceeds its depth limit, the roots of J in
 * floating point stand in (the exact Hurwitz test per interval still decides each interval).
 */
function crossingX(Ns: DPoly, Ds: DPoly): Dyadic[] {
	const J = oddImagPart(Ds, Ns);
	if (isZero(J)) return [];
	let s = primitive(J.c);
	while (s.length > 1 && s[0] === 0n) s = s.slice(1);
	if (s.length <= 1) return [];
	// Isolation on J itself first (the usual square-free case); only when it fails, on the square-free part
	// (Yun 1976; the gcd is costly for high orders, so it is not taken up front). A root of J where N(jw) = 0
	// as well gives a huge or meaningless k: harmless, since the Hurwitz property is constant across a gain
	// that is not a crossing, the intervals on both sides are tested and merged.
	let iso = allPositiveRoots(s);
	if (iso === null) {
		const g = gcdPoly(s, derivInt(s));
		if (g.length > 1) s = divExact(s, g);
		iso = allPositiveRoots(s);
	}
	if (iso === null) {
		const [Nf, Df] = toFloatCommon([Ns, Ds]);
		const out: Dyadic[] = [];
		for (const x of positiveRealRoots(toFloat(J), 1e-6)) {
			const w = Math.sqrt(x);
			const r = divC(evalJw(Df, w), evalJw(Nf, w));
			if (Math.abs(r.im) <= 1e-6 * Math.max(1, Math.abs(r.re))) out.push(dyadicOf(x));
		}
		return out;
	}
	return iso.map(({ lo, hi }) => {
		const b = refineRoot(s, lo, hi, 1e-15);
		const e = Math.min(b.lo.e, b.hi.e) - 1;
		return { m: (b.lo.m << BigInt(b.lo.e - e - 1)) + (b.hi.m << BigInt(b.hi.e - e - 1)), e };
	});
}

export function linearGainIntervals(plant: Plant): GainInterval[] {
	const { Ns, Ds, w0, order } = plant;
	if (isZero(Ns))
		return hurwitzAtGain(plant, 0)
			? [{ low: -Infinity, high: Infinity, lowFrequency: null, highFrequency: null }]
			: [];
	const cand: { k: number; w: number | null }[] = [];
	// Gains evaluated exactly (dyadic arithmetic) and rounded once.
	if (Ns.c[0] !== 0n)
		cand.push({ k: -ratioToNumber({ m: Ds.c[0], e: Ds.e }, { m: Ns.c[0], e: Ns.e }), w: 0 });
	for (const x of crossingX(Ns, Ds)) {
		const r = exactRatioAtX(Ds, Ns, x);
		cand.push({ k: -r.re, w: Math.sqrt(dyadicToNumber(x.m, x.e)) * w0 });
	}
	if (Ns.c.length - 1 === order)
		cand.push({ k: -ratioToNumber({ m: Ds.c[order], e: Ds.e }, { m: Ns.c[order], e: Ns.e }), w: null });
	const ks = cand.filter((c) => Number.isFinite(c.k)).sort((a, b) => a.k - b.k);
	const uniq: { k: number; w: number | null }[] = [];
	for (const c of ks) {
		const last = uniq[uniq.length - 1];
		if (last && Math.abs(c.k - last.k) <= 1e-12 * Math.max(1, Math.abs(c.k))) continue;
		uniq.push(c);
	}
	// Test one interior gain per interval, exactly.
	const edges = [-Infinity, ...uniq.map((u) => u.k), Infinity];
	const freqs = [null, ...uniq.map((u) => u.w), null];
	const out: GainInterval[] = [];
	for (let i = 0; i + 1 < edges.length; i++) {
		const a = edges[i];
		const b = edges[i + 1];
		let t: number;
		if (a === -Infinity && b === Infinity) t = 0;
		else if (a === -Infinity) t = b - Math.max(1, Math.abs(b));
		else if (b === Infinity) t = a + Math.max(1, Math.abs(a));
		else t = (a + b) / 2;
		if (!hurwitzAtGain(plant, t)) continue;
		const prev = out[out.length - 1];
		if (prev && prev.high === a) {
			prev.high = b;
			prev.highFrequency = freqs[i + 1];
		} else out.push({ low: a, high: b, lowFrequency: freqs[i], highFrequency: freqs[i + 1] });
	}
	return out;
}

export function intervalContaining(iv: GainInterval[], k: number): GainInterval | null {
	for (const g of iv) if (g.low < k && k < g.high) return g;
	return null;
}
