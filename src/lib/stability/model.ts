// Models as exact rational transfer functions, conversions between the input forms, poles, zeros.
import {
	type DPoly,
	type Dyadic,
	addD,
	degree,
	dpolyFromNumbers,
	dyadicOf,
	dyadicToNumber,
	isZero,
	mulD,
	negD,
	scaleD,
	scaleFrequencyD,
	trim
} from './exact';
import { type C, polyRoots } from './roots';
import type { Model } from './schema';
import { parseModel } from './schema';

/** G(s) = N(s)/D(s), exact dyadic coefficients, ascending powers. */
export interface ExactTF {
	N: DPoly;
	D: DPoly;
}

/** A model prepared for analysis: exact polynomials in the scaled frequency variable s' = s / w0. */
export interface Plant {
	tf: ExactTF;
	/** Frequency scale w0 = 2^scaleLog2 (a power of two, so the scaling is exact). */
	scaleLog2: number;
	w0: number;
	Ns: DPoly;
	Ds: DPoly;
	order: number;
}

function realFactor(root: number): DPoly {
	// (s - r)
	return dpolyFromNumbers([-root, 1]);
}

function pairFactor(re: number, im: number): DPoly {
	// (s - a - jb)(s - a + jb) = s^2 - 2a s + (a^2 + b^2), formed exactly in dyadics.
	const a = dyadicOf(re);
	const b = dyadicOf(im);
	const a2: DPoly = { c: [a.m * a.m], e: 2 * a.e };
	const b2: DPoly = { c: [b.m * b.m], e: 2 * b.e };
	const c0 = addD(a2, b2);
	const c1: DPoly = { c: [0n, -2n * a.m], e: a.e };
	return addD(addD(c0, c1), { c: [0n, 0n, 1n], e: 0 });
}

function fromRoots(list: [number, number][]): DPoly {
	let p: DPoly = { c: [1n], e: 0 };
	const used = new Array(list.length).fill(false);
	for (let i = 0; i < list.length; i++) {
		if (used[i]) continue;
		const [re, im] = list[i];
		if (im === 0) {
			p = mulD(p, realFactor(re));
			used[i] = true;
			continue;
		}
		for (let j = i + 1; j < list.length; j++) {
			if (!used[j] && list[j][0] === re && list[j][1] === -im) {
				used[j] = true;
				break;
			}
		}
		used[i] = true;
		p = mulD(p, pairFactor(re, Math.abs(im)));
	}
	return p;
}

interface IntMatrix {
	M: bigint[][];
	e: number;
}

function toIntMatrix(d: Dyadic[][]): IntMatrix {
	let e = Infinity;
	for (const row of d) for (const v of row) if (v.m !== 0n && v.e < e) e = v.e;
	if (e === Infinity) e = 0;
	return { M: d.map((row) => row.map((v) => (v.m === 0n ? 0n : v.m << BigInt(v.e - e)))), e };
}

function subDy(a: Dyadic, b: Dyadic): Dyadic {
	if (b.m === 0n) return a;
	if (a.m === 0n) return { m: -b.m, e: b.e };
	const e = Math.min(a.e, b.e);
	return { m: (a.m << BigInt(a.e - e)) - (b.m << BigInt(b.e - e)), e };
}

function mulDy(a: Dyadic, b: Dyadic): Dyadic {
	return { m: a.m * b.m, e: a.e + b.e };
}

/**
 * Characteristic polynomial det(sI - A) of an integer matrix by Berkowitz's division-free algorithm
 * (S. J. Berkowitz, "On computing the determinant in small parallel time using a small number of
 * processors", Inform. Process. Lett. 18 (1984) 147-150). Exact; returns DESCENDING coefficients.
 */
export function berkowitz(A: bigint[][]): bigint[] {
	const n = A.length;
	if (n === 0) return [1n];
	let vect: bigint[] = [1n, -A[n - 1][n - 1]];
	for (let k = n - 2; k >= 0; k--) {
		const m = n - 1 - k; // size of the trailing block M = A[k+1.., k+1..]
		const a = A[k][k];
		const R = A[k].slice(k + 1);
		let S: bigint[] = [];
		for (let i = k + 1; i < n; i++) S.push(A[i][k]);
		// col = [1, -a, -R S, -R M S, ..., -R M^(m-1) S]
		const col: bigint[] = [1n, -a];
		for (let p = 0; p < m; p++) {
			let dot = 0n;
			for (let i = 0; i < m; i++) dot += R[i] * S[i];
			col.push(-dot);
			if (p < m - 1) {
				const nextS: bigint[] = new Array(m).fill(0n);
				for (let i = 0; i < m; i++) {
					let s = 0n;
					const row = A[k + 1 + i];
					for (let j = 0; j < m; j++) s += row[k + 1 + j] * S[j];
					nextS[i] = s;
				}
				S = nextS;
			}
		}
		const next: bigint[] = new Array(m + 2).fill(0n);
		for (let i = 0; i < m + 2; i++) {
			let s = 0n;
			for (let j = 0; j <= Math.min(i, m); j++) s += col[i - j] * vect[j];
			next[i] = s;
		}
		vect = next;
	}
	return vect;
}

/** det(sI - 2^e M) as an ascending DPoly: coefficient of s^(n-i) is c_i 2^(e i). */
function charPolyDyadic(im: IntMatrix): DPoly {
	const desc = berkowitz(im.M);
	const n = desc.length - 1;
	// ascending: power j = n - i gets c_i * 2^(e i); use common exponent e*n if e<0, else shift.
	const parts: Dyadic[] = [];
	for (let j = 0; j <= n; j++) {
		const i = n - j;
		parts.push({ m: desc[i], e: im.e * i });
	}
	let emin = Infinity;
	for (const p of parts) if (p.m !== 0n && p.e < emin) emin = p.e;
	if (emin === Infinity) emin = 0;
	return trim({ c: parts.map((p) => (p.m === 0n ? 0n : p.m << BigInt(p.e - emin))), e: emin });
}

/**
 * State space to transfer function, exactly. N(s) = C adj(sI - A) B + D det(sI - A), and by the matrix
 * determinant lemma C adj(sI - A) B = det(sI - A + B C) - det(sI - A) (e.g. Horn & Johnson, Matrix Analysis,
 * 2nd ed., section 0.8.5), so two Berkowitz characteristic polynomials give the numerator exactly.
 */
function ssToExact(A: number[][], B: number[][], Cm: number[][], Dm: number[][]): ExactTF {
	const n = A.length;
	const Ad = A.map((r) => r.map(dyadicOf));
	const Bd = B.map((r) => dyadicOf(r[0]));
	const Cd = Cm[0].map(dyadicOf);
	const Dd = dyadicOf(Dm[0][0]);
	const Abc: Dyadic[][] = [];
	for (let i = 0; i < n; i++) {
		const row: Dyadic[] = [];
		for (let j = 0; j < n; j++) row.push(subDy(Ad[i][j], mulDy(Bd[i], Cd[j])));
		Abc.push(row);
	}
	const den = charPolyDyadic(toIntMatrix(Ad));
	const pert = charPolyDyadic(toIntMatrix(Abc));
	let num = addD(pert, negD(den));
	num = addD(num, scaleD(den, Dd));
	return { N: trim(num), D: trim(den) };
}

/** det(sI - M) of a dyadic matrix, exactly (Berkowitz), as an ascending DPoly. */
export function charPolyOf(M: Dyadic[][]): DPoly {
	return charPolyDyadic(toIntMatrix(M));
}

const tfCache = new WeakMap<object, ExactTF>();

export function exactTransferFunction(modelIn: Model): ExactTF {
	const hit = tfCache.get(modelIn);
	if (hit) return hit;
	const model = modelIn;
	let tf: ExactTF;
	if (model.kind === 'tf') {
		tf = {
			N: dpolyFromNumbers(model.num.slice().reverse()),
			D: dpolyFromNumbers(model.den.slice().reverse())
		};
	} else if (model.kind === 'zpk') {
		const N = model.gain === 0 ? { c: [], e: 0 } : scaleD(fromRoots(model.zeros), dyadicOf(model.gain));
		tf = { N: trim(N), D: fromRoots(model.poles) };
	} else {
		tf = ssToExact(model.A, model.B, model.C, model.D);
	}
	tfCache.set(modelIn, tf);
	return tf;
}

function dpolyToNumbersDesc(p: DPoly): { coeffs: number[]; exact: boolean } {
	let exact = true;
	const asc = p.c.map((v) => {
		const x = dyadicToNumber(v, p.e);
		if (!Number.isFinite(x)) {
			exact = false;
			return x;
		}
		const back = dyadicOf(x);
		const orig = trim({ c: [v], e: p.e });
		const o = orig.c.length ? { m: orig.c[0], e: orig.e } : { m: 0n, e: 0 };
		if (back.m !== o.m || (o.m !== 0n && back.e !== o.e)) exact = false;
		return x;
	});
	return { coeffs: asc.reverse(), exact };
}

/**
 * Transfer function with real coefficients, highest power first. `exact` is false when a coefficient of
 * the exact rational result could not be held in a double (only possible for state-space or zpk input).
 */
export function toTransferFunction(model: Model): { num: number[]; den: number[]; exact: boolean } {
	const m = parseIfNeeded(model);
	const tf = exactTransferFunction(m);
	// Normalise by a power of two so the leading denominator coefficient is in [1, 2): keeps doubles in range.
	const lead = tf.D.c[tf.D.c.length - 1];
	const shift = -(tf.D.e + (lead < 0n ? -lead : lead).toString(2).length - 1);
	const N = { c: tf.N.c, e: tf.N.e + shift };
	const D = { c: tf.D.c, e: tf.D.e + shift };
	const n = isZero(N) ? { coeffs: [0], exact: true } : dpolyToNumbersDesc(N);
	const d = dpolyToNumbersDesc(D);
	return { num: n.coeffs, den: d.coeffs, exact: n.exact && d.exact };
}

function parseIfNeeded(model: Model): Model {
	return typeof model === 'object' && model !== null && 'kind' in model ? model : parseModel(model);
}

function floatAsc(p: DPoly): number[] {
	let maxBits = 0;
	for (const v of p.c) maxBits = Math.max(maxBits, (v < 0n ? -v : v).toString(2).length);
	return p.c.map((v) => dyadicToNumber(v, -maxBits));
}

function rootsOfDPoly(p: DPoly): { re: number; im: number }[] {
	if (degree(p) < 1) return [];
	return polyRoots(floatAsc(p)).map((r: C) => ({ re: r.re, im: r.im }));
}

/**
 * Poles: for zpk input the poles as entered; otherwise the roots of the exact denominator (for state space,
 * of det(sI - A), so uncontrollable or unobservable modes are included), by the Aberth–Ehrlich iteration.
 */
export function poles(model: Model): { re: number; im: number }[] {
	const m = parseIfNeeded(model);
	if (m.kind === 'zpk') return m.poles.map(([re, im]) => ({ re, im }));
	return rootsOfDPoly(exactTransferFunction(m).D);
}

export function zeros(model: Model): { re: number; im: number }[] {
	const m = parseIfNeeded(model);
	if (m.kind === 'zpk') return m.gain === 0 ? [] : m.zeros.map(([re, im]) => ({ re, im }));
	return rootsOfDPoly(exactTransferFunction(m).N);
}

/** G(0); Infinity (signed) when G has a pole at the origin, NaN for 0/0 (cancelled pole and zero at 0). */
export function dcGain(model: Model): number {
	const tf = exactTransferFunction(parseIfNeeded(model));
	const n0 = tf.N.c[0] ?? 0n;
	const d0 = tf.D.c[0] ?? 0n;
	if (d0 === 0n)
		return n0 === 0n ? NaN : (n0 > 0n ? 1 : -1) * Infinity * (tf.D.c.find((v) => v !== 0n)! > 0n ? 1 : -1);
	// N(0)/D(0) with exponents: (n0 2^eN) / (d0 2^eD)
	const bl = Math.max((n0 < 0n ? -n0 : n0).toString(2).length, (d0 < 0n ? -d0 : d0).toString(2).length);
	return (dyadicToNumber(n0, -bl) / dyadicToNumber(d0, -bl)) * 2 ** (tf.N.e - tf.D.e);
}

/** deg D - deg N; null for the zero transfer function. */
export function relativeDegree(model: Model): number | null {
	const tf = exactTransferFunction(parseIfNeeded(model));
	if (isZero(tf.N)) return null;
	return degree(tf.D) - degree(tf.N);
}

const plantCache = new WeakMap<object, Plant>();

/**
 * Frequency scaling s = w0 s' with w0 = 2^k close to the geometric mean of the pole magnitudes, estimated
 * as |d_low/d_n|^(1/(n-low)). A power of two keeps the scaling exact (Higham, 2nd ed., section 2.1: scaling by
 * a power of the base is exact barring over/underflow) while bringing the coefficients close to each other.
 */
export function preparePlant(model: Model): Plant {
	const hit = plantCache.get(model);
	if (hit) return hit;
	const tf = exactTransferFunction(model);
	const n = degree(tf.D);
	let low = 0;
	while (low < n && tf.D.c[low] === 0n) low++;
	let k = 0;
	if (n - low >= 1) {
		const l2 = (x: bigint) => {
			const a = x < 0n ? -x : x;
			const b = a.toString(2).length;
			const t = Math.max(0, b - 60);
			return Math.log2(Number(a >> BigInt(t))) + t;
		};
		const est = (l2(tf.D.c[low]) - l2(tf.D.c[n])) / (n - low);
		k = Math.round(est);
		if (!Number.isFinite(k)) k = 0;
	}
	const plant: Plant = {
		tf,
		scaleLog2: k,
		w0: 2 ** k,
		Ns: isZero(tf.N) ? tf.N : scaleFrequencyD(tf.N, k),
		Ds: scaleFrequencyD(tf.D, k),
		order: n
	};
	plantCache.set(model, plant);
	return plant;
}
