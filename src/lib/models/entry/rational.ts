// Exact rationals (BigInt numerator / denominator) and polynomials over them, for turning a typed
// transfer-function expression into coefficients without rounding on the way: 1.1 * 3.5 is 3.85 here,
// where binary floating point gives 3.8500000000000005. Only the final coefficients are rounded, once,
// each to the nearest double (IEEE 754-2019, section 4.3.1, round to nearest, ties to even).
// Conventions: polynomial coefficient arrays are ASCENDING (index = power of s); no trailing zeros.

export interface Q {
	n: bigint;
	d: bigint; // > 0, gcd(n, d) = 1
}

const absB = (a: bigint) => (a < 0n ? -a : a);

function gcd(a: bigint, b: bigint): bigint {
	a = absB(a);
	b = absB(b);
	while (b) [a, b] = [b, a % b];
	return a;
}

export function q(n: bigint, d: bigint = 1n): Q {
	if (d === 0n) throw new RangeError('zero denominator');
	if (d < 0n) {
		n = -n;
		d = -d;
	}
	const g = gcd(n, d) || 1n;
	return { n: n / g, d: d / g };
}

export const ZERO: Q = { n: 0n, d: 1n };
export const ONE: Q = { n: 1n, d: 1n };
export const isZeroQ = (a: Q) => a.n === 0n;
export const addQ = (a: Q, b: Q) => q(a.n * b.d + b.n * a.d, a.d * b.d);
export const subQ = (a: Q, b: Q) => q(a.n * b.d - b.n * a.d, a.d * b.d);
export const mulQ = (a: Q, b: Q) => q(a.n * b.n, a.d * b.d);
export const divQ = (a: Q, b: Q) => q(a.n * b.d, a.d * b.n);
export const negQ = (a: Q): Q => ({ n: -a.n, d: a.d });

/**
 * The exact value of a decimal numeral ("1.1", "-3.5e-2", "7", "2.") as a rational, or null when the
 * text is not one. The exponent is bounded: beyond 1e±400 the value cannot be a double anyway.
 */
export function decimalToQ(text: string): Q | null {
	const m = /^([+-]?)(\d*)(?:\.(\d*))?(?:[eE]([+-]?\d+))?$/.exec(text.trim());
	if (!m || (m[2] === '' && (m[3] ?? '') === '')) return null;
	const digits = (m[2] || '0') + (m[3] ?? '');
	const exp = (m[4] ? Number(m[4]) : 0) - (m[3] ?? '').length;
	if (!Number.isFinite(exp) || Math.abs(exp) > 400 + digits.length) return null;
	let n = BigInt(digits) * (m[1] === '-' ? -1n : 1n);
	let d = 1n;
	if (exp >= 0) n *= 10n ** BigInt(exp);
	else d = 10n ** BigInt(-exp);
	return q(n, d);
}

function bitLen(a: bigint): number {
	return a === 0n ? 0 : absB(a).toString(2).length;
}

/**
 * The double nearest to n/d, correctly rounded: the quotient is formed with at least 65 significant bits
 * and a sticky bit for a non-zero remainder, so the one rounding (BigInt to Number rounds to nearest,
 * ties to even) sees the exact value's side of every halfway point. Values in the subnormal range are
 * rounded a second time by the final scaling; coefficients that small (below 2^-1022) are refused
 * before they get here (see toDouble's caller).
 */
export function toDouble(a: Q): number {
	if (a.n === 0n) return 0;
	const neg = a.n < 0n;
	const n = absB(a.n);
	const shift = Math.max(0, 66 - (bitLen(n) - bitLen(a.d)));
	const num = n << BigInt(shift);
	let qt = num / a.d;
	if (num % a.d !== 0n) qt |= 1n;
	// qt has 65 or more bits; keep 64 + sticky so Number() rounds once, then scale by 2^(drop - shift).
	const drop = Math.max(0, bitLen(qt) - 64);
	let top = qt >> BigInt(drop);
	if (drop > 0 && (qt & ((1n << BigInt(drop)) - 1n)) !== 0n) top |= 1n;
	let x = Number(top);
	let k = drop - shift;
	while (k > 1000) {
		x *= 2 ** 1000;
		k -= 1000;
	}
	while (k < -1000) {
		x *= 2 ** -1000;
		k += 1000;
	}
	x *= 2 ** k;
	return neg ? -x : x;
}

// ---- polynomials (ascending) ----

export type QPoly = Q[];

export function trimP(p: QPoly): QPoly {
	let k = p.length;
	while (k > 0 && isZeroQ(p[k - 1])) k--;
	return p.slice(0, k);
}
export const degreeP = (p: QPoly) => trimP(p).length - 1; // -1 for the zero polynomial
export const isZeroP = (p: QPoly) => trimP(p).length === 0;
export const constP = (c: Q): QPoly => trimP([c]);

export function addP(a: QPoly, b: QPoly): QPoly {
	const out: QPoly = [];
	for (let i = 0; i < Math.max(a.length, b.length); i++) out.push(addQ(a[i] ?? ZERO, b[i] ?? ZERO));
	return trimP(out);
}
export const negP = (a: QPoly): QPoly => a.map(negQ);
export function mulP(a: QPoly, b: QPoly): QPoly {
	if (!a.length || !b.length) return [];
	const out: QPoly = new Array(a.length + b.length - 1).fill(ZERO);
	for (let i = 0; i < a.length; i++)
		for (let j = 0; j < b.length; j++) out[i + j] = addQ(out[i + j], mulQ(a[i], b[j]));
	return trimP(out);
}

/** Quotient and remainder of a / b (b not zero). */
export function divModP(a: QPoly, b: QPoly): { quo: QPoly; rem: QPoly } {
	const bb = trimP(b);
	let rem = trimP(a);
	const db = bb.length - 1;
	const lead = bb[db];
	const quo: QPoly = new Array(Math.max(0, rem.length - db)).fill(ZERO);
	while (rem.length - 1 >= db && rem.length) {
		const k = rem.length - 1 - db;
		const c = divQ(rem[rem.length - 1], lead);
		quo[k] = c;
		const sub: QPoly = new Array(k).fill(ZERO).concat(bb.map((x) => mulQ(x, c)));
		rem = addP(rem, negP(sub));
	}
	return { quo: trimP(quo), rem };
}

/** Monic greatest common divisor (Euclid over the rationals; degrees here are small). */
export function gcdP(a: QPoly, b: QPoly): QPoly {
	let x = trimP(a);
	let y = trimP(b);
	while (y.length) [x, y] = [y, divModP(x, y).rem];
	if (!x.length) return [ONE];
	const lead = x[x.length - 1];
	return x.map((c) => divQ(c, lead));
}
