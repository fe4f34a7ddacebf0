// Independent references for the engine tests: high-precision evaluation with mathjs BigNumber (a general
// library, not engine code) and plant construction from known factors.
import { all, create, type BigNumber } from 'mathjs';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';

const math = create(all, { number: 'BigNumber', precision: 64 });
type BN = BigNumber;
const big = (x: number): BN => math.bignumber(x) as BN;

/** Re and Im of p(jw), p highest power first, in 64-digit arithmetic. */
function evalJwBig(p: number[], w: BN): { re: BN; im: BN } {
	let re = big(0);
	let im = big(0);
	for (const c of p) {
		// (re + j im)(j w) + c
		const nre = im.neg().times(w).plus(big(c));
		const nim = re.times(w);
		re = nre;
		im = nim;
	}
	return { re, im };
}

/** G(jw) = num(jw)/den(jw) at 64 digits, returned as doubles. */
export function gJwBig(num: number[], den: number[], w: number): { re: number; im: number } {
	const W = big(w);
	const n = evalJwBig(num, W);
	const d = evalJwBig(den, W);
	const d2 = d.re.times(d.re).plus(d.im.times(d.im));
	const re = n.re.times(d.re).plus(n.im.times(d.im)).div(d2);
	const im = n.im.times(d.re).minus(n.re.times(d.im)).div(d2);
	return { re: re.toNumber(), im: im.toNumber() };
}

/** Minimum of Re G(jw) over a dense log grid (an upper bound on the true minimum). */
export function gridMinReG(
	num: number[],
	den: number[],
	wLo: number,
	wHi: number,
	n: number
): { value: number; w: number } {
	let best = { value: Infinity, w: NaN };
	for (let i = 0; i <= n; i++) {
		const w = wLo * (wHi / wLo) ** (i / n);
		const v = gJwBig(num, den, w).re;
		if (v < best.value) best = { value: v, w };
	}
	return best;
}

/** Polynomial (highest power first) with the given roots, in doubles. */
export function polyFromRoots(roots: { re: number; im: number }[]): number[] {
	// Multiply real factors and conjugate-pair quadratics.
	let p = [1];
	const mul = (a: number[], b: number[]) => {
		const c = new Array(a.length + b.length - 1).fill(0);
		for (let i = 0; i < a.length; i++) for (let j = 0; j < b.length; j++) c[i + j] += a[i] * b[j];
		return c;
	};
	for (const r of roots) {
		if (r.im === 0) p = mul(p, [1, -r.re]);
		else if (r.im > 0) p = mul(p, [1, -2 * r.re, r.re * r.re + r.im * r.im]);
	}
	return p;
}

/** Eigenvalues of the companion matrix of p (highest power first) by ml-matrix: an independent root finder. */
export function companionRoots(p: number[]): { re: number; im: number }[] {
	const n = p.length - 1;
	const a = p.map((c) => c / p[0]);
	const M = Matrix.zeros(n, n);
	for (let j = 0; j < n; j++) M.set(0, j, -a[j + 1]);
	for (let i = 1; i < n; i++) M.set(i, i - 1, 1);
	const e = new EigenvalueDecomposition(M);
	return e.realEigenvalues.map((re, i) => ({ re, im: e.imaginaryEigenvalues[i] }));
}

/** Controllable canonical state-space form of num/den (highest power first, den monic after scaling). */
export function controllableForm(num: number[], den: number[]) {
	const n = den.length - 1;
	const a = den.map((c) => c / den[0]);
	const b = new Array(n + 1 - num.length).fill(0).concat(num.map((c) => c / den[0]));
	const d = b[0];
	// G = d + (b - d a)(s) / a(s)
	const r = b.map((v, i) => v - d * a[i]);
	const A: number[][] = [];
	for (let i = 0; i < n; i++) {
		const row = new Array(n).fill(0);
		if (i < n - 1) row[i + 1] = 1;
		else for (let j = 0; j < n; j++) row[j] = -a[n - j];
		A.push(row);
	}
	const B = A.map((_, i) => [i === n - 1 ? 1 : 0]);
	const C = [new Array(n).fill(0).map((_, j) => r[n - j])];
	return { kind: 'ss' as const, A, B, C, D: [[d]] };
}

type Cx = { re: number; im: number };

/** G(jw) = gain prod(jw - z) / prod(jw - p), evaluated factor by factor in doubles (no polynomial). */
export function zpkJw(poles: Cx[], zeros: Cx[], gain: number, w: number): Cx {
	let re = gain;
	let im = 0;
	const mul = (a: number, b: number) => {
		const r = re * a - im * b;
		im = re * b + im * a;
		re = r;
	};
	for (const z of zeros) mul(-z.re, w - z.im);
	for (const p of poles) {
		const a = -p.re;
		const b = w - p.im;
		const d = a * a + b * b;
		mul(a / d, -b / d);
	}
	return { re, im };
}

/**
 * Independent reference for the largest sector with k1 = 0: min over w >= 0 of Re G(jw), G given by its
 * factors. A log grid over the pole magnitudes, refined around every resonance (w_n (1 + t zeta)), then
 * golden-section refinement of the best local minima; the minimiser is good to about sqrt(machine epsilon),
 * the minimum to about machine epsilon (a minimum is flat). Not engine code: it evaluates G from its
 * factors and never forms the frequency polynomial. Returns the limit k2* = -1/min (Infinity when the
 * minimum is not negative) and the minimising frequency.
 */
export function refLimitFromFactors(
	poles: Cx[],
	zeros: Cx[],
	gain: number
): { limit: number; minReG: number; w: number } {
	const f = (w: number) => zpkJw(poles, zeros, gain, w).re;
	const mags = poles.map((p) => Math.hypot(p.re, p.im)).filter((m) => m > 0);
	const lo = Math.min(...mags) / 1e3;
	const hi = Math.max(...mags) * 1e3;
	const ws: number[] = [0];
	for (let i = 0; i <= 3000; i++) ws.push(lo * (hi / lo) ** (i / 3000));
	for (const p of poles) {
		const wn = Math.hypot(p.re, p.im);
		const z = wn > 0 ? Math.max(1e-6, -p.re / wn) : 1;
		for (let t = -6; t <= 6; t += 0.05) ws.push(wn * (1 + t * z));
	}
	// Repeated (or nearly repeated) poles give repeated grid points: keep each once, so every bracket has
	// width. Points within 1e-9 of each other count as one: two grids meeting at 0.98 and 0.98 - 4e-16 once
	// made a bracket too narrow to hold the true minimiser 0.98038 next to them.
	const pts = ws
		.filter((w) => w >= 0)
		.sort((a, b) => a - b)
		.filter((w, i, all) => i === 0 || w > all[i - 1] * (1 + 1e-9))
		.map((w) => ({ w, v: f(w) }));
	const local: number[] = [];
	for (let i = 0; i < pts.length; i++) {
		const l = i > 0 ? pts[i - 1].v : Infinity;
		const r = i + 1 < pts.length ? pts[i + 1].v : Infinity;
		if (pts[i].v <= l && pts[i].v <= r) local.push(i);
	}
	local.sort((a, b) => pts[a].v - pts[b].v);
	let best = { w: pts[local[0]].w, v: pts[local[0]].v };
	const phi = (Math.sqrt(5) - 1) / 2;
	for (const i of local.slice(0, 6)) {
		let a = pts[Math.max(0, i - 1)].w;
		let b = pts[Math.min(pts.length - 1, i + 1)].w;
		for (let it = 0; it < 200 && b - a > 1e-15 * b; it++) {
			const c = b - phi * (b - a);
			const d = a + phi * (b - a);
			if (f(c) < f(d)) b = d;
			else a = c;
		}
		const w = (a + b) / 2;
		const v = f(w);
		if (v < best.v) best = { w, v };
	}
	// Re G tends to G(inf) as w grows: the infimum may be approached there.
	const gInf = zeros.length === poles.length ? gain : 0;
	if (gInf < best.v) best = { w: Infinity, v: gInf };
	return { limit: best.v < 0 ? -1 / best.v : Infinity, minReG: best.v, w: best.w };
}
