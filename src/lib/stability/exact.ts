// Exact arithmetic on polynomials whose coefficients are dyadic rationals (m * 2^e).
//
// Why dyadic: every finite binary64 number is exactly m * 2^e (IEEE 754-2019, section 3.4), so a model
// entered as floating-point coefficients is a polynomial over the dyadic rationals, and sums and products
// stay dyadic. Sign decisions (Routh–Hurwitz, Sturm) can then run on plain BigInt integers: multiplying a
// polynomial by a positive power of two never changes a sign.
//
// Conventions in this file: coefficient arrays are ASCENDING (index = power of s or x).
import { tickNow } from './budget';

export interface Dyadic {
	m: bigint;
	e: number;
}

/** A polynomial sum_i c[i] * 2^e * s^i with integer c[i]; ascending powers. */
export interface DPoly {
	c: bigint[];
	e: number;
}

const F64 = new Float64Array(1);
const U64 = new BigUint64Array(F64.buffer);

/** Exact decomposition of a finite double into odd mantissa times a power of two. */
export function dyadicOf(x: number): Dyadic {
	if (!Number.isFinite(x)) throw new RangeError('dyadicOf: non-finite value');
	if (x === 0) return { m: 0n, e: 0 };
	F64[0] = x;
	const bits = U64[0];
	const sign = bits >> 63n ? -1n : 1n;
	const expBits = Number((bits >> 52n) & 0x7ffn);
	const frac = bits & 0xfffffffffffffn;
	let m: bigint;
	let e: number;
	if (expBits === 0) {
		m = frac;
		e = -1074;
	} else {
		m = frac | 0x10000000000000n;
		e = expBits - 1075;
	}
	while ((m & 1n) === 0n) {
		m >>= 1n;
		e += 1;
	}
	return { m: sign * m, e };
}

/**
 * Bit length of |a|, possibly one too large (when |a| is just below a power of two and converting to a
 * double rounds up). Used only for choosing scale factors, never for a decision.
 */
export function bitLength(a: bigint): number {
	if (a < 0n) a = -a;
	if (a === 0n) return 0;
	const x = Number(a);
	if (x < 2 ** 1000) return Math.floor(Math.log2(x)) + 1;
	return a.toString(16).length * 4;
}

/** x * 2^k without intermediate overflow or underflow where the result is representable. */
export function ldexp(x: number, k: number): number {
	while (k > 1000) {
		x *= 2 ** 1000;
		k -= 1000;
		if (!Number.isFinite(x)) return x;
	}
	while (k < -1000) {
		x *= 2 ** -1000;
		k += 1000;
		if (x === 0) return 0;
	}
	return x * 2 ** k;
}

/**
 * Nearest-ish double to m * 2^e. Relative error at most 2^-52 (one truncation below 2^-60 plus one
 * round-to-nearest), plus absolute 2^-1074 in the subnormal range; the error bounds in certify.ts use
 * 1.1 * 2^-52.
 */
export function dyadicToNumber(m: bigint, e: number): number {
	if (m === 0n) return 0;
	const bl = bitLength(m);
	if (bl > 62) {
		const t = bl - 62;
		m = m >> BigInt(t);
		e += t;
	}
	return ldexp(Number(m), e);
}

/** log2 |m * 2^e| to about 1e-15 relative; used only for scaling choices, never for decisions. */
export function log2Abs(m: bigint, e: number): number {
	if (m === 0n) return -Infinity;
	const bl = bitLength(m);
	const t = Math.max(0, bl - 62);
	return Math.log2(Math.abs(Number(m >> BigInt(t)))) + t + e;
}

export function dpolyFromNumbers(asc: readonly number[]): DPoly {
	const parts = asc.map(dyadicOf);
	let e = Infinity;
	for (const p of parts) if (p.m !== 0n && p.e < e) e = p.e;
	if (e === Infinity) e = 0;
	const c = parts.map((p) => (p.m === 0n ? 0n : p.m << BigInt(p.e - e)));
	return trim({ c, e });
}

/** Drop leading (highest-power) zero coefficients and pull common factors of two into e. */
export function trim(p: DPoly): DPoly {
	const c = p.c.slice();
	while (c.length > 0 && c[c.length - 1] === 0n) c.pop();
	let e = p.e;
	if (c.length === 0) return { c: [], e: 0 };
	let or = 0n;
	for (const v of c) or |= v < 0n ? -v : v;
	let tz = 0;
	while ((or & 1n) === 0n) {
		or >>= 1n;
		tz++;
	}
	if (tz > 0) {
		const s = BigInt(tz);
		for (let i = 0; i < c.length; i++) c[i] = c[i] >> s;
		e += tz;
	}
	return { c, e };
}

export function degree(p: DPoly): number {
	return p.c.length - 1;
}

export function isZero(p: DPoly): boolean {
	return p.c.length === 0;
}

export function addD(a: DPoly, b: DPoly): DPoly {
	if (isZero(a)) return b;
	if (isZero(b)) return a;
	const e = Math.min(a.e, b.e);
	const sa = BigInt(a.e - e);
	const sb = BigInt(b.e - e);
	const n = Math.max(a.c.length, b.c.length);
	const c: bigint[] = new Array(n);
	for (let i = 0; i < n; i++) c[i] = ((a.c[i] ?? 0n) << sa) + ((b.c[i] ?? 0n) << sb);
	return trim({ c, e });
}

export function scaleD(a: DPoly, k: Dyadic): DPoly {
	if (k.m === 0n) return { c: [], e: 0 };
	return { c: a.c.map((v) => v * k.m), e: a.e + k.e };
}

export function negD(a: DPoly): DPoly {
	return { c: a.c.map((v) => -v), e: a.e };
}

export function mulD(a: DPoly, b: DPoly): DPoly {
	if (isZero(a) || isZero(b)) return { c: [], e: 0 };
	return trim({ c: mulInt(a.c, b.c), e: a.e + b.e });
}

export function mulInt(a: readonly bigint[], b: readonly bigint[]): bigint[] {
	const c: bigint[] = new Array(a.length + b.length - 1).fill(0n);
	for (let i = 0; i < a.length; i++) {
		const ai = a[i];
		if (ai === 0n) continue;
		for (let j = 0; j < b.length; j++) c[i + j] += ai * b[j];
	}
	return c;
}

/** p(2^k s): exact frequency scaling by a power of two. */
export function scaleFrequencyD(p: DPoly, k: number): DPoly {
	if (isZero(p)) return p;
	const n = p.c.length - 1;
	if (k >= 0) return trim({ c: p.c.map((v, i) => v << BigInt(k * i)), e: p.e });
	const kk = -k;
	return trim({ c: p.c.map((v, i) => v << BigInt(kk * (n - i))), e: p.e - kk * n });
}

/** p(-s). */
export function reflectD(p: DPoly): DPoly {
	return { c: p.c.map((v, i) => (i % 2 === 1 ? -v : v)), e: p.e };
}

/**
 * E(x) = Re[P(jw) Q(-jw)] as a polynomial in x = w^2.
 * P(s)Q(-s) evaluated at s = jw has real part equal to its even part; s^(2m) = (-1)^m x^m.
 */
export function evenRealPart(P: DPoly, Q: DPoly): DPoly {
	if (isZero(P) || isZero(Q)) return { c: [], e: 0 };
	const prod = mulInt(P.c, reflectD(Q).c);
	const c: bigint[] = [];
	for (let i = 0; i < prod.length; i += 2) c.push((i / 2) % 2 === 1 ? -prod[i] : prod[i]);
	return trim({ c, e: P.e + Q.e });
}

/**
 * J(x) with Im[P(jw) Q(-jw)] = w * J(w^2): the odd part of P(s)Q(-s) divided by s, then s = jw.
 * s^(2m+1) = j (-1)^m w^(2m+1).
 */
export function oddImagPart(P: DPoly, Q: DPoly): DPoly {
	if (isZero(P) || isZero(Q)) return { c: [], e: 0 };
	const prod = mulInt(P.c, reflectD(Q).c);
	const c: bigint[] = [];
	for (let i = 1; i < prod.length; i += 2) {
		const m = (i - 1) / 2;
		c.push(m % 2 === 1 ? -prod[i] : prod[i]);
	}
	return trim({ c, e: P.e + Q.e });
}

export function signB(a: bigint): number {
	return a > 0n ? 1 : a < 0n ? -1 : 0;
}

/** Exact sign of p(x) at a dyadic point x = m 2^k (p's own factor 2^e is positive, so it is ignored). */
export function signAt(p: readonly bigint[], x: Dyadic): number {
	// p(x) * 2^(-k n) * ... : evaluate sum c_i m^i 2^(k i); multiply through by 2^(-k_min) to stay integral.
	const n = p.length - 1;
	if (n < 0) return 0;
	if (x.e >= 0) {
		const xv = x.m << BigInt(x.e);
		let acc = 0n;
		for (let i = n; i >= 0; i--) acc = acc * xv + p[i];
		return signB(acc);
	}
	// x = m / 2^f with f > 0: 2^(f n) p(x) = sum c_i m^i 2^(f (n - i))
	const f = BigInt(-x.e);
	let acc = 0n;
	let d = 1n;
	for (let i = n; i >= 0; i--) {
		acc = acc * x.m + p[i] * d;
		d <<= f;
	}
	return signB(acc);
}

export function absB(a: bigint): bigint {
	return a < 0n ? -a : a;
}

export function gcdB(a: bigint, b: bigint): bigint {
	a = absB(a);
	b = absB(b);
	while (b !== 0n) {
		const t = a % b;
		a = b;
		b = t;
	}
	return a;
}

/** Positive content (gcd of coefficients). */
export function contentB(p: readonly bigint[]): bigint {
	let g = 0n;
	for (const v of p) {
		if (v === 0n) continue;
		g = g === 0n ? absB(v) : gcdB(g, v);
		if (g === 1n) return 1n;
	}
	return g === 0n ? 1n : g;
}

export function primitive(p: readonly bigint[]): bigint[] {
	const g = contentB(p);
	if (g === 1n) return p.slice();
	return p.map((v) => v / g);
}

function trimInt(p: bigint[]): bigint[] {
	while (p.length > 0 && p[p.length - 1] === 0n) p.pop();
	return p;
}

export function derivInt(p: readonly bigint[]): bigint[] {
	const d: bigint[] = [];
	for (let i = 1; i < p.length; i++) d.push(p[i] * BigInt(i));
	return trimInt(d);
}

/**
 * Pseudo-remainder: lc(b)^(deg a - deg b + 1) * a = q b + r (Knuth, TAOCP vol. 2, 3rd ed., section 4.6.1,
 * Algorithm R). Returns r with the multiplier's sign so callers can keep Sturm signs right.
 */
export function pseudoRemainder(a: readonly bigint[], b: readonly bigint[]): { r: bigint[]; sign: number } {
	const r = a.slice();
	const db = b.length - 1;
	const lb = b[db];
	let steps = 0;
	for (let k = r.length - 1; k >= db; k--) {
		tickNow();
		const t = r[k];
		for (let i = 0; i <= k; i++) r[i] *= lb;
		if (t !== 0n) for (let i = 0; i <= db; i++) r[k - db + i] -= t * b[i];
		steps++;
	}
	r.length = Math.max(0, db);
	const sign = lb < 0n && steps % 2 === 1 ? -1 : 1;
	return { r: trimInt(r), sign };
}

/**
 * Number of distinct real roots of p in the open interval (0, +inf), by Sturm's theorem (Sturm 1829;
 * e.g. Basu, Pollack & Roy, Algorithms in Real Algebraic Geometry, 2nd ed., Theorem 2.50). The sequence
 * p, p', -rem, ... is formed with the subresultant pseudo-remainder sequence (Collins 1967; Brown &
 * Traub 1971; Cohen, A Course in Computational Algebraic Number Theory, Algorithm 3.3.1), whose exact
 * divisions keep coefficient growth linear without gcds. Every element is scaled by a positive factor only
 * (signs are fixed so each one is a positive multiple of the negated remainder), so the sign variations
 * are those of the Sturm sequence. Requires p(0) != 0. Sign at 0+ is the sign of the lowest nonzero
 * coefficient; at +inf, of the leading one.
 */
export function sturmPositiveRootCount(p: readonly bigint[]): number {
	const p0 = trimInt(primitive(p));
	if (p0.length <= 1) return 0;
	if (p0[0] === 0n) throw new RangeError('sturmPositiveRootCount: p(0) = 0');
	const seq: bigint[][] = [p0, derivInt(p0)];
	let g = 1n;
	let h = 1n;
	for (;;) {
		const A = seq[seq.length - 2];
		const B = seq[seq.length - 1];
		if (B.length <= 1) break;
		const delta = A.length - B.length;
		const { r, sign } = pseudoRemainder(A, B);
		if (r.length === 0) break;
		const den = g * h ** BigInt(delta);
		const q = r.map((v) => {
			if (v % den !== 0n) throw new RangeError('subresultant division not exact');
			return v / den;
		});
		// prem = lc(B)^(delta+1) rem with sign `sign`; the Sturm element is a positive multiple of -rem.
		seq.push(sign === 1 ? q.map((v) => -v) : q);
		const lcA = absB(B[B.length - 1]);
		g = lcA;
		if (delta === 0) {
			// h unchanged
		} else if (delta === 1) h = g;
		else h = g ** BigInt(delta) / h ** BigInt(delta - 1);
	}
	const varAt = (pick: (q: bigint[]) => bigint) => {
		let v = 0;
		let last = 0;
		for (const q of seq) {
			const sg = signB(pick(q));
			if (sg === 0) continue;
			if (last !== 0 && sg !== last) v++;
			last = sg;
		}
		return v;
	};
	const lowest = (q: bigint[]) => {
		for (const v of q) if (v !== 0n) return v;
		return 0n;
	};
	return varAt(lowest) - varAt((q) => q[q.length - 1]);
}

/** Sign variations of an integer sequence, zeros skipped (Descartes' rule of signs). */
export function signVariations(p: readonly bigint[]): number {
	let v = 0;
	let last = 0;
	for (const c of p) {
		const s = signB(c);
		if (s === 0) continue;
		if (last !== 0 && s !== last) v++;
		last = s;
	}
	return v;
}

/**
 * Exact Hurwitz test (all roots in the open left half-plane) by the Routh array in integers
 * (Routh 1877; Hurwitz 1895; e.g. Gantmacher, The Theory of Matrices, vol. 2, ch. XV). A polynomial of
 * degree n with positive leading coefficient is Hurwitz iff all n+1 first-column entries are positive.
 * Rows are formed fraction-free (multiplying by the previous pivot, which is positive while the test is
 * still alive), so signs are unchanged.
 */
export function isHurwitzExact(pIn: readonly bigint[]): { hurwitz: boolean; failedRow?: number } {
	let p = trimInt(pIn.slice());
	const n = p.length - 1;
	if (n < 0) return { hurwitz: false, failedRow: 0 };
	if (p[n] < 0n) p = p.map((v) => -v);
	if (n === 0) return { hurwitz: true };
	// Necessary condition (Stodola): every coefficient positive.
	for (const v of p) if (v <= 0n) return { hurwitz: false, failedRow: -1 };
	let r0: bigint[] = [];
	let r1: bigint[] = [];
	for (let i = n; i >= 0; i -= 2) r0.push(p[i]);
	for (let i = n - 1; i >= 0; i -= 2) r1.push(p[i]);
	// Fraction-free rows: each cross product is divided exactly by the pivot two rows up (the entries are
	// then Hurwitz-minor sized, as in Bareiss's fraction-free elimination, Math. Comp. 22 (1968) 565-578),
	// which is positive while the test is alive, so signs are unchanged. Should a division ever not be
	// exact, the row falls back to division by its positive content.
	let divisor = 1n;
	for (let row = 1; row <= n; row++) {
		tickNow();
		if (r1.length === 0 || r1[0] <= 0n) return { hurwitz: false, failedRow: row };
		if (row === n) break;
		let next: bigint[] = [];
		let exact = true;
		for (let j = 0; j < r0.length - 1; j++) {
			const v = r1[0] * r0[j + 1] - r0[0] * (r1[j + 1] ?? 0n);
			next.push(v);
			if (exact && v % divisor !== 0n) exact = false;
		}
		next = exact ? next.map((v) => v / divisor) : primitive(next);
		divisor = exact ? r0[0] : 1n;
		r0 = r1;
		r1 = next;
	}
	return { hurwitz: true };
}

/** Primitive gcd of two integer polynomials (primitive PRS; Knuth TAOCP vol. 2, 4.6.1, Algorithm E). */
export function gcdPoly(a: readonly bigint[], b: readonly bigint[]): bigint[] {
	let x = trimInt(primitive(a));
	let y = trimInt(primitive(b));
	if (x.length < y.length) [x, y] = [y, x];
	while (y.length > 0) {
		tickNow();
		if (y.length === 1) return [1n];
		const { r } = pseudoRemainder(x, y);
		x = y;
		y = r.length ? primitive(r) : [];
	}
	if (x.length && x[x.length - 1] < 0n) x = x.map((v) => -v);
	return x;
}

/** Exact quotient a / b for integer polynomials when b divides a and b is primitive (Gauss's lemma). */
export function divExact(a: readonly bigint[], b: readonly bigint[]): bigint[] {
	const r = a.slice();
	const db = b.length - 1;
	const lb = b[db];
	const q: bigint[] = new Array(Math.max(0, r.length - db)).fill(0n);
	for (let k = r.length - 1; k >= db; k--) {
		const t = r[k];
		if (t === 0n) continue;
		if (t % lb !== 0n) throw new RangeError('divExact: not divisible');
		const c = t / lb;
		q[k - db] = c;
		for (let i = 0; i <= db; i++) r[k - db + i] -= c * b[i];
	}
	for (let i = 0; i < db; i++) if (r[i] !== 0n) throw new RangeError('divExact: nonzero remainder');
	return trimInt(q);
}

/**
 * Number of distinct roots in (0, inf) at which p changes sign (roots of odd multiplicity), through the
 * repeated-gcd square-free chain g_0 = p, g_k = gcd(g_(k-1), g_(k-1)'): g_(k-1)/g_k collects the factors
 * of multiplicity >= k (Yun 1976, "On square-free decomposition algorithms").
 */
export function oddMultiplicityPositiveRoots(p: readonly bigint[]): number {
	const chain: bigint[][] = [trimInt(primitive(p))];
	while (chain[chain.length - 1].length > 1) {
		const g = chain[chain.length - 1];
		chain.push(gcdPoly(g, derivInt(g)));
	}
	// S_k = g_(k-1) / g_k has the roots of multiplicity >= k, each once.
	const counts: number[] = [];
	for (let k = 1; k < chain.length; k++) {
		const s = divExact(chain[k - 1], chain[k]);
		counts.push(countPositiveWithZero(s));
	}
	counts.push(0);
	let odd = 0;
	for (let k = 0; k < counts.length - 1; k += 2) odd += counts[k] - counts[k + 1];
	return odd;
}

/** Distinct roots in (0, inf), tolerating a root at 0 by dividing it out. */
export function countPositiveWithZero(p: readonly bigint[]): number {
	let q = trimInt(p.slice());
	while (q.length > 1 && q[0] === 0n) q = q.slice(1);
	if (q.length <= 1) return 0;
	return sturmPositiveRootCount(q);
}

/** a - b for dyadics, exactly. */
export function subDyadic(a: Dyadic, b: Dyadic): Dyadic {
	if (b.m === 0n) return a;
	if (a.m === 0n) return { m: -b.m, e: b.e };
	const e = Math.min(a.e, b.e);
	return { m: (a.m << BigInt(a.e - e)) - (b.m << BigInt(b.e - e)), e };
}

/**
 * The first leading principal minor (1-based order) of a square dyadic matrix that is not positive, or 0
 * when all are positive, i.e. when a symmetric matrix is positive definite (Sylvester's criterion).
 * Fraction-free Gaussian elimination without pivoting (E. H. Bareiss, Math. Comp. 22 (1968) 565-578): its
 * k-th pivot is the k-th leading principal minor, and every division is exact.
 */
export function firstNonPositiveMinor(M: readonly Dyadic[][]): number {
	const n = M.length;
	let e = Infinity;
	for (const r of M) for (const v of r) if (v.m !== 0n) e = Math.min(e, v.e);
	if (e === Infinity) return n > 0 ? 1 : 0;
	const a = M.map((r) => r.map((v) => (v.m === 0n ? 0n : v.m << BigInt(v.e - e))));
	let prev = 1n;
	for (let k = 0; k < n; k++) {
		if (a[k][k] <= 0n) return k + 1;
		for (let i = k + 1; i < n; i++)
			for (let j = k + 1; j < n; j++) a[i][j] = (a[k][k] * a[i][j] - a[i][k] * a[k][j]) / prev;
		prev = a[k][k];
	}
	return 0;
}
