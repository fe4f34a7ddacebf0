// Floating-point polynomial helpers for reported (not decided) quantities. Ascending coefficients.
import type { DPoly } from './exact';
import { dyadicToNumber } from './exact';

/** Float copy of an exact polynomial, all coefficients times the same power of two 2^-shiftOut. */
export function toFloat(p: DPoly, shift = 0): number[] {
	return p.c.map((v) => dyadicToNumber(v, p.e + shift));
}

/** Float copies of several exact polynomials with ONE common power-of-two scale (keeps their ratios). */
export function toFloatCommon(ps: DPoly[]): number[][] {
	let top = -Infinity;
	for (const p of ps)
		for (const v of p.c) {
			if (v === 0n) continue;
			const b = (v < 0n ? -v : v).toString(2).length + p.e;
			if (b > top) top = b;
		}
	const shift = top === -Infinity ? 0 : -top;
	return ps.map((p) => toFloat(p, shift));
}

export function reflectF(a: readonly number[]): number[] {
	return a.map((v, i) => (i % 2 ? -v : v));
}

function mulF(a: readonly number[], b: readonly number[]): number[] {
	if (!a.length || !b.length) return [];
	const c = new Array(a.length + b.length - 1).fill(0);
	for (let i = 0; i < a.length; i++) for (let j = 0; j < b.length; j++) c[i + j] += a[i] * b[j];
	return c;
}

/** Re[P(jw) Q(-jw)] as a polynomial in x = w^2. */
export function evenRealPartF(P: readonly number[], Q: readonly number[]): number[] {
	const prod = mulF(P, reflectF(Q));
	const c: number[] = [];
	for (let i = 0; i < prod.length; i += 2) c.push((i / 2) % 2 ? -prod[i] : prod[i]);
	return c;
}

/** J(x) with Im[P(jw) Q(-jw)] = w J(w^2). */
export function oddImagPartF(P: readonly number[], Q: readonly number[]): number[] {
	const prod = mulF(P, reflectF(Q));
	const c: number[] = [];
	for (let i = 1; i < prod.length; i += 2) c.push(((i - 1) / 2) % 2 ? -prod[i] : prod[i]);
	return c;
}

export function addF(a: readonly number[], b: readonly number[], kb = 1): number[] {
	const n = Math.max(a.length, b.length);
	const c: number[] = [];
	for (let i = 0; i < n; i++) c.push((a[i] ?? 0) + kb * (b[i] ?? 0));
	return c;
}

/** p(jw) for real w, ascending coefficients. */
export function evalJw(p: readonly number[], w: number): { re: number; im: number } {
	let re = 0;
	let im = 0;
	for (let k = p.length - 1; k >= 0; k--) {
		// (re + j im) * (j w) + p_k
		const nre = -im * w + p[k];
		const nim = re * w;
		re = nre;
		im = nim;
	}
	return { re, im };
}

export function divC(
	a: { re: number; im: number },
	b: { re: number; im: number }
): { re: number; im: number } {
	const d = b.re * b.re + b.im * b.im;
	return { re: (a.re * b.re + a.im * b.im) / d, im: (a.im * b.re - a.re * b.im) / d };
}
