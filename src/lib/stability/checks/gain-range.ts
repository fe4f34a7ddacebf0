// Linear gain range: the real gains k for which the closed loop with 1 + k G is stable, i.e. D + k N is
// Hurwitz. Roots of D + k N move continuously with k and can only leave the open left half-plane by
// crossing the imaginary axis or by escaping through infinity (Evans root locus; e.g. Franklin, Powell &
// Emami-Naeini, Feedback Control of Dynamic Systems, ch. 5). A crossing at s = jw needs D(jw) + k N(jw) = 0,
// so k = -D(jw)/N(jw) must be real: w = 0, or Im[D(jw) N(-jw)] = w J(w^2) = 0; an escape through infinity
// happens where the leading coefficient d_n + k n_n vanishes. Between consecutive candidate gains the
// Hurwitz property is constant, so one exact test per interval decides it.
import { addD, dyadicOf, isZero, oddImagPart, scaleD } from '../exact';
import { certifiedHurwitz } from '../certify';
import { divC, evalJw, toFloatCommon } from '../fpoly';
import type { Plant } from '../model';
import { positiveRealRoots } from '../roots';
import { toFloat } from '../fpoly';

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

export function linearGainIntervals(plant: Plant): GainInterval[] {
	const { Ns, Ds, w0, order } = plant;
	if (isZero(Ns))
		return hurwitzAtGain(plant, 0)
			? [{ low: -Infinity, high: Infinity, lowFrequency: null, highFrequency: null }]
			: [];
	const [Nf, Df] = toFloatCommon([Ns, Ds]);
	const cand: { k: number; w: number | null }[] = [];
	if (Nf[0] !== 0) cand.push({ k: -Df[0] / Nf[0], w: 0 });
	const J = toFloat(oddImagPart(Ds, Ns));
	for (const x of positiveRealRoots(J, 1e-6)) {
		const w = Math.sqrt(x);
		const r = divC(evalJw(Df, w), evalJw(Nf, w));
		if (Math.abs(r.im) <= 1e-6 * Math.max(1, Math.abs(r.re))) cand.push({ k: -r.re, w: w * w0 });
	}
	if (Nf.length - 1 === order) cand.push({ k: -Df[order] / Nf[order], w: null });
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
