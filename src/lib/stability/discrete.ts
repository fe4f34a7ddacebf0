// Discrete-time (sampled-data) models: exact Schur stability by Jury's test, the bilinear map of the unit
// circle onto the imaginary axis, and zero-order-hold conversion of a continuous model. Pure; no I/O.
//
// A discrete model carries `sampleTime` T and its coefficients are in z (highest power first, as for s), so
// tf, zpk and ss give the same exact rational G(z) = N(z)/D(z) through model.ts (the algebra of the
// conversions does not depend on the name of the variable).
import { tickNow } from './budget';
import {
	type DPoly,
	type Dyadic,
	absB,
	bitLength,
	dyadicOf,
	dyadicToNumber,
	mulInt,
	primitive,
	trim
} from './exact';
import { polyRoots } from './roots';
import { toFloatCommon } from './fpoly';
import type { Model } from './schema';

/**
 * Schur stability (all roots in the open unit disk) of a real polynomial, decided exactly: Jury's stability
 * table in its Schur–Cohn form (E. I. Jury, "Theory and Application of the z-Transform Method", Wiley 1964,
 * ch. 3; E. I. Jury and J. Blanchard, "A stability test for linear discrete systems in table form",
 * Proc. IRE 49 (1961) 1947-1948; the recursion is I. Schur's, 1917, and A. Cohn's, 1922; from memory).
 * With p_k(z) = a_k z^k + ... + a_0 and its reciprocal p_k*(z) = z^k p_k(1/z), p_k is Schur iff
 * |a_0| < |a_k| and p_(k-1)(z) = (a_k p_k(z) - a_0 p_k*(z)) / z is Schur. The rows are integer polynomials
 * (coefficients ascending); each is divided by its positive content, which changes no comparison
 * |a_0| < |a_k|, and keeps the growth near linear in the degree.
 * Returns the step at which the test failed (0 = the polynomial itself), if it did.
 */
export function isSchurExact(pIn: readonly bigint[]): { schur: boolean; failedStep?: number } {
	let a = pIn.slice();
	while (a.length > 0 && a[a.length - 1] === 0n) a.pop();
	if (a.length === 0) return { schur: false, failedStep: 0 };
	for (let step = 0; a.length > 1; step++) {
		tickNow();
		const k = a.length - 1;
		const lead = a[k];
		const c0 = a[0];
		if (absB(c0) >= absB(lead)) return { schur: false, failedStep: step };
		const next: bigint[] = new Array(k);
		for (let j = 1; j <= k; j++) next[j - 1] = lead * a[j] - c0 * a[k - j];
		// Leading entry lead^2 - c0^2 > 0: never a zero row.
		a = primitive(next);
	}
	return { schur: true };
}

/** Largest root modulus of an exact polynomial (numerical, for reports only). */
export function spectralRadius(p: DPoly): number | null {
	if (p.c.length <= 1) return null;
	const roots = polyRoots(toFloatCommon([p])[0]);
	return roots.reduce((m, r) => Math.max(m, Math.hypot(r.re, r.im)), 0);
}

function binomialRow(n: number): bigint[][] {
	// (1 + s)^i for i = 0..n, ascending.
	const out: bigint[][] = [[1n]];
	for (let i = 1; i <= n; i++) out.push(mulInt(out[i - 1], [1n, 1n]));
	return out;
}

/**
 * The bilinear (Möbius) map z = (1 + w) / (1 - w): p~(w) = (1 - w)^n p((1 + w) / (1 - w)) for a polynomial
 * of degree at most n. It maps the open unit disk onto the open left half-plane and the unit circle onto the
 * imaginary axis, z = e^(j theta) <-> w = j tan(theta / 2), theta in [0, pi) <-> omega in [0, inf), and
 * theta = pi to omega = infinity (e.g. Jury 1964, section 3.3; K. Ogata, Discrete-Time Control Systems,
 * 2nd ed., section 4-3). Exact in integers; coefficients ascending in w.
 */
export function bilinear(p: DPoly, n: number): DPoly {
	const plus = binomialRow(n);
	const minus: bigint[][] = [[1n]];
	for (let i = 1; i <= n; i++) minus.push(mulInt(minus[i - 1], [1n, -1n]));
	const out: bigint[] = new Array(n + 1).fill(0n);
	for (let i = 0; i < p.c.length; i++) {
		if (p.c[i] === 0n) continue;
		const t = mulInt(plus[i], minus[n - i]);
		for (let k = 0; k < t.length; k++) out[k] += p.c[i] * t[k];
	}
	return trim({ c: out, e: p.e });
}

/** theta in [0, pi] from x = omega^2 of the bilinear variable (null = omega infinite, theta = pi). */
export function thetaOfX(x: number | null): number {
	return x === null ? Math.PI : 2 * Math.atan(Math.sqrt(Math.max(0, x)));
}

// ---------------------------------------------------------------------------------------------------------
// Zero-order hold.
//
// The ZOH equivalent of x' = A x + B u, y = C x + D u at the sample time T is x[k+1] = Ad x[k] + Bd u[k],
// y[k] = C x[k] + D u[k], with [[Ad, Bd], [0, I]] = exp([[A, B], [0, 0]] T) (G. F. Franklin, J. D. Powell and
// M. L. Workman, Digital Control of Dynamic Systems, 3rd ed., section 6.3; C. F. Van Loan, "Computing
// integrals involving the matrix exponential", IEEE Trans. Automatic Control AC-23 (1978) 395-404).
//
// The exponential is computed by scaling and squaring with a Taylor polynomial (Moler & Van Loan, "Nineteen
// dubious ways to compute the exponential of a matrix", SIAM Review 20 (1978), method 3) in BigInt fixed
// point with PREC fractional bits, and its error is bounded, in the infinity norm, by
//   - the input: each entry of M T / 2^s is rounded once to the fixed point (m 2^-PREC in norm);
//   - the Taylor tail: ||X||^(K+1) / (K+1)! / (1 - ||X|| / (K+2)) for ||X|| <= 1/2;
//   - each product and division rounded once per entry (2 m 2^-PREC in norm per term);
//   - a perturbation E of X moves exp(X) by at most ||E|| e^(||X|| + ||E||);
//   - squaring: ||Y^2 - Yt^2|| <= e (2 ||Y|| + e) plus the rounding of the product.
// The bound is accumulated in floating point and inflated by 1 % for the rounding of that bookkeeping; the
// final rounding of each entry to a double adds |entry| 2^-53. The bound covers the exponential only; a tf
// or zpk model is first realised in controllable canonical form, whose coefficients are divided by the
// leading denominator coefficient (exact when that is a power of two; reported otherwise).
// ---------------------------------------------------------------------------------------------------------

const PREC = 200;
const ONE = 1n << BigInt(PREC);

function toFixed(x: Dyadic): bigint {
	// round(x 2^PREC) toward zero; |error| < 2^-PREC
	const sh = x.e + PREC;
	if (sh >= 0) return x.m << BigInt(sh);
	const s = BigInt(-sh);
	return x.m >= 0n ? x.m >> s : -(-x.m >> s);
}

function fixedToNumber(v: bigint): number {
	return dyadicToNumber(v, -PREC);
}

function normInf(M: bigint[][]): number {
	let best = 0;
	for (const row of M) {
		let s = 0;
		for (const v of row) s += Math.abs(fixedToNumber(v));
		best = Math.max(best, s);
	}
	return best * (1 + 1e-12);
}

function mulFixed(X: bigint[][], Y: bigint[][]): bigint[][] {
	const m = X.length;
	const out: bigint[][] = [];
	for (let i = 0; i < m; i++) {
		tickNow();
		const row: bigint[] = new Array(m).fill(0n);
		for (let k = 0; k < m; k++) {
			const x = X[i][k];
			if (x === 0n) continue;
			const yr = Y[k];
			for (let j = 0; j < m; j++) row[j] += x * yr[j];
		}
		out.push(row.map((v) => (v >= 0n ? v >> BigInt(PREC) : -(-v >> BigInt(PREC)))));
	}
	return out;
}

export interface ZohResult {
	Ad: number[][];
	Bd: number[][];
	/** Bound on |computed - exact| of every entry of Ad and Bd (absolute). */
	errorBound: number;
	squarings: number;
	taylorTerms: number;
}

/** exp([[A, B], [0, 0]] T) with a rigorous entrywise error bound (see above). */
export function zohMatrices(A: number[][], B: number[][], T: number): ZohResult {
	const n = A.length;
	const p = B[0]?.length ?? 0;
	const m = n + p;
	const Td = dyadicOf(T);
	// M T exactly as dyadics, then the norm for the scaling.
	const MT: Dyadic[][] = [];
	for (let i = 0; i < m; i++) {
		const row: Dyadic[] = [];
		for (let j = 0; j < m; j++) {
			let v = 0;
			if (i < n) v = j < n ? A[i][j] : B[i][j - n];
			const d = dyadicOf(v);
			row.push({ m: d.m * Td.m, e: d.e + Td.e });
		}
		MT.push(row);
	}
	let norm = 0;
	for (const row of MT) {
		let s = 0;
		for (const v of row) s += Math.abs(dyadicToNumber(v.m, v.e));
		norm = Math.max(norm, s);
	}
	norm *= 1 + 1e-12;
	let s = 0;
	while (norm / 2 ** s > 0.5) s++;
	const X = MT.map((row) => row.map((v) => toFixed({ m: v.m, e: v.e - s })));
	const u = 2 ** -PREC;
	const xNorm = Math.min(0.5 + 1e-12, normInf(X));
	// Taylor terms until the tail is below 2^-PREC.
	let K = 1;
	let fact = 1;
	let pow = xNorm;
	for (;;) {
		fact *= K + 1;
		pow *= xNorm;
		const tail = pow / fact / (1 - xNorm / (K + 2));
		if (tail < u || K > 80) break;
		K++;
	}
	const tailBound = xNorm ** (K + 1) / fact / (1 - xNorm / (K + 2));
	let term: bigint[][] = X.map((row, i) => row.map((_, j) => (i === j ? ONE : 0n)));
	const S: bigint[][] = term.map((row) => row.slice());
	let termErr = 0;
	let sumErr = 0;
	for (let k = 1; k <= K; k++) {
		term = mulFixed(term, X).map((row) => row.map((v) => v / BigInt(k)));
		// The exact term's error grows through the product with X and gains 2 m u of rounding.
		termErr = (termErr * xNorm + 2 * m * u) / k + 2 * m * u;
		sumErr += termErr;
		for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) S[i][j] += term[i][j];
	}
	const inputErr = m * u;
	let err = sumErr + tailBound + inputErr * Math.exp(xNorm + inputErr);
	let Y = S;
	for (let i = 0; i < s; i++) {
		const yn = normInf(Y);
		Y = mulFixed(Y, Y);
		err = err * (2 * yn + err) + m * u;
	}
	err *= 1.01;
	const Ad: number[][] = [];
	const Bd: number[][] = [];
	let roundErr = 0;
	for (let i = 0; i < n; i++) {
		const ar: number[] = [];
		const br: number[] = [];
		for (let j = 0; j < m; j++) {
			const v = fixedToNumber(Y[i][j]);
			roundErr = Math.max(roundErr, Math.abs(v) * 2 ** -53);
			if (j < n) ar.push(v);
			else br.push(v);
		}
		Ad.push(ar);
		Bd.push(br);
	}
	return { Ad, Bd, errorBound: err + roundErr, squarings: s, taylorTerms: K };
}

/**
 * A state-space realisation of a continuous tf or zpk model in controllable canonical form (e.g. Franklin,
 * Powell & Workman, 3rd ed., section 4.3), with the flag `exact` false when dividing by the leading
 * denominator coefficient rounded.
 */
function realise(
	num: number[],
	den: number[]
): { A: number[][]; B: number[][]; C: number[][]; D: number[][]; exact: boolean } {
	const n = den.length - 1;
	const a0 = den[0];
	const a0Power2 = bitLength(dyadicOf(a0).m < 0n ? -dyadicOf(a0).m : dyadicOf(a0).m) === 1;
	const a = den.map((v) => v / a0);
	const b = new Array(n + 1 - num.length).fill(0).concat(num.map((v) => v / a0));
	const d = b[0];
	const A: number[][] = [];
	for (let i = 0; i < n; i++) {
		const row = new Array(n).fill(0);
		if (i === 0) for (let j = 0; j < n; j++) row[j] = -a[j + 1];
		else row[i - 1] = 1;
		A.push(row);
	}
	const B = Array.from({ length: n }, (_, i) => [i === 0 ? 1 : 0]);
	const C = [Array.from({ length: n }, (_, j) => b[j + 1] - d * a[j + 1])];
	// d * a[j+1] rounds unless d = 0; only a0 a power of two and d = 0 keep every entry exact.
	return { A, B, C, D: [[d]], exact: a0Power2 && d === 0 };
}

/** The discrete ss model of a continuous model sampled through a zero-order hold at T, with its bounds. */
export function zohModel(
	model: Model,
	T: number,
	tf: (m: Model) => { num: number[]; den: number[]; exact: boolean }
): { model: Model; errorBound: number; realisationExact: boolean } {
	let A: number[][], B: number[][], C: number[][], D: number[][];
	let exact = true;
	if (model.kind === 'ss') ({ A, B, C, D } = model);
	else {
		const t = tf({ ...model, discretize: undefined } as Model);
		const r = realise(t.num, t.den);
		({ A, B, C, D } = r);
		exact = t.exact && r.exact;
	}
	if (A.length === 0)
		return {
			model: { kind: 'tf', num: [D[0][0]], den: [1], sampleTime: T },
			errorBound: 0,
			realisationExact: exact
		};
	const z = zohMatrices(A, B, T);
	return {
		model: { kind: 'ss', A: z.Ad, B: z.Bd, C, D, sampleTime: T },
		errorBound: z.errorBound,
		realisationExact: exact
	};
}
