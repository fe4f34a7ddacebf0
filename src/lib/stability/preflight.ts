// Preflight: what every criterion needs before any sector verdict, decided once for every check.
//
// 1. Well-posedness. With the direct feedthrough G(inf) = D, the loop u = -k y, y = G u is defined for the
//    gain k only if 1 + k D != 0. A sector that contains k = -1/D is never proved, whatever a frequency
//    test says (the circle test can pass there: Z(inf) = 0 with relative degree one). The test is exact:
//    1 + k D is affine in k, so it vanishes in the closed sector iff its signs at the two ends differ
//    (or one is zero).
// 2. Hidden modes. The model as entered is the system: a mode that the transfer function does not show (a
//    pole cancelled by a zero in a tf or zpk, an uncontrollable or unobservable eigenvalue of A in state
//    space) is not moved by any feedback. For a single-input single-output model these modes are exactly
//    the roots of gcd(N, D) with N = C adj(sI - A) B + D det(sI - A), D = det(sI - A): a realisation is
//    minimal iff it is controllable and observable, iff N and det(sI - A) are coprime (Kailath, Linear
//    Systems, 1980, the chapters on realisations; from memory). One rule for every check: a hidden mode with
//    Re s >= 0 makes the loop unstable for every gain (and the model not passive), so every check fails
//    with that reason; hidden modes in the open left half-plane decay whatever the loop does and are
//    allowed.
// 3. Largest sector unbounded above (used by max-sector): with Q = D + k1 N Hurwitz and
//    B(x) = Re[N(jw) Q(-jw)], x = w^2, the circle condition for [k1, k2] is |Q|^2 + (k2 - k1) B > 0 on
//    x >= 0 (plus the conditions at infinity), so B >= 0 on [0, inf) proves every finite k2 at once.
import {
	type Dyadic,
	addD,
	bitLength,
	degree,
	dyadicOf,
	dyadicToNumber,
	evenRealPart,
	gcdPoly,
	isHurwitzExact,
	isZero,
	oddMultiplicityPositiveRoots,
	scaleD,
	signAt
} from './exact';
import { EXACT_BUDGET, certifiedHurwitz, certifiedPositiveOnHalfLine } from './certify';
import { circleCore } from './checks/circle';
import type { MaxSectorCore } from './checks/max-sector';
import { linearGainIntervals } from './checks/gain-range';
import type { Plant } from './model';
import { polyRoots } from './roots';
import type { Check, Model } from './schema';
import { type CheckResult, enc } from './types';

const fmt = (x: number) => (Number.isFinite(x) ? Number(x.toPrecision(6)).toString() : String(x));

// ---------------------------------------------------------------------------------------------------------
// Well-posedness

interface Feedthrough {
	/** Leading coefficients of N and D (same power s^n). */
	n: Dyadic;
	d: Dyadic;
	/** G(inf) and -1/G(inf) as doubles, for the report. */
	value: number;
	gain: number;
}

const ftCache = new WeakMap<Plant, Feedthrough | null>();

/** The direct feedthrough G(inf) when it is nonzero (deg N = deg D), else null. */
export function feedthrough(plant: Plant): Feedthrough | null {
	if (ftCache.has(plant)) return ftCache.get(plant)!;
	const { N, D } = plant.tf;
	let out: Feedthrough | null = null;
	const n = degree(D);
	if (!isZero(N) && degree(N) === n) {
		const nl = { m: N.c[n], e: N.e };
		const dl = { m: D.c[n], e: D.e };
		const bl = Math.max(bitLength(nl.m), bitLength(dl.m));
		const value = (dyadicToNumber(nl.m, -bl) / dyadicToNumber(dl.m, -bl)) * 2 ** (nl.e - dl.e);
		out = { n: nl, d: dl, value, gain: -1 / value };
	}
	ftCache.set(plant, out);
	return out;
}

function signDy(a: Dyadic, b: Dyadic): number {
	// sign of a + b, exactly
	const e = Math.min(a.e, b.e);
	const s = (a.m << BigInt(a.e - e)) + (b.m << BigInt(b.e - e));
	return s > 0n ? 1 : s < 0n ? -1 : 0;
}

/** Exact sign of 1 + k G(inf) (k = Infinity: the sign as k grows without bound). */
function signOnePlusKD(ft: Feedthrough, k: number): number {
	const sd = ft.d.m > 0n ? 1 : -1;
	if (k === Infinity) return (ft.n.m > 0n ? 1 : -1) * sd;
	const kd = dyadicOf(k);
	// 1 + k n/d = (d + k n)/d
	return signDy(ft.d, { m: kd.m * ft.n.m, e: kd.e + ft.n.e }) * sd;
}

/**
 * Is 1 + k G(inf) != 0 for every k in the closed sector [k1, k2] (k2 may be Infinity)? When not, `gain`
 * is the gain -1/G(inf) at which the loop is not defined.
 */
export function wellPosedOn(
	plant: Plant,
	k1: number,
	k2: number
): { wellPosed: boolean; gain: number | null } {
	const ft = feedthrough(plant);
	if (!ft) return { wellPosed: true, gain: null };
	const s1 = signOnePlusKD(ft, k1);
	const s2 = signOnePlusKD(ft, k2);
	return s1 * s2 > 0 ? { wellPosed: true, gain: null } : { wellPosed: false, gain: ft.gain };
}

function illPosedReason(plant: Plant, gain: number, where: string): string {
	const ft = feedthrough(plant)!;
	return `The loop is not well posed at the gain k = ${fmt(gain)}, ${where}: the direct feedthrough is G(inf) = ${fmt(ft.value)}, so 1 + k G(inf) = 0 there and the loop equation has no unique solution. No criterion proves a sector that contains this gain.`;
}

// ---------------------------------------------------------------------------------------------------------
// Hidden modes

export interface HiddenModes {
	/** Degree of gcd(N, D) of the model as entered (0: minimal). */
	degree: number;
	/** Some hidden mode has Re s >= 0 (decided exactly, by the Routh test on the gcd). */
	unstable: boolean;
	/** The hidden modes, numerical, rad/s. */
	modes: { re: number; im: number }[];
	kind: Model['kind'];
	/** G is identically zero: every mode of the model is hidden. */
	zeroGain: boolean;
}

// Primes below 2^26, so a product of two residues is below 2^52 and exact in a double (both checked with
// sympy.isprime, Debian python3-sympy 1.11).
const PRIMES = [67108859, 33554393];

function mulM(a: number, b: number, p: number): number {
	return (a * b) % p;
}

function invM(a: number, p: number): number {
	// extended Euclid
	let [r0, r1] = [p, a];
	let [t0, t1] = [0, 1];
	while (r1 !== 0) {
		const q = Math.floor(r0 / r1);
		[r0, r1] = [r1, r0 - q * r1];
		[t0, t1] = [t1, t0 - q * t1];
	}
	return ((t0 % p) + p) % p;
}

function modP(c: readonly bigint[], p: number): number[] {
	const P = BigInt(p);
	const out = c.map((v) => {
		const r = Number(v % P);
		return r < 0 ? r + p : r;
	});
	while (out.length && out[out.length - 1] === 0) out.pop();
	return out;
}

function remM(aIn: number[], b: number[], p: number): number[] {
	const a = aIn.slice();
	const db = b.length - 1;
	const inv = invM(b[db], p);
	while (a.length - 1 >= db && a.length > 0) {
		const k = a.length - 1;
		const f = mulM(a[k], inv, p);
		for (let i = 0; i <= db; i++) a[k - db + i] = (a[k - db + i] - mulM(f, b[i], p) + p) % p;
		a.pop();
		while (a.length && a[a.length - 1] === 0) a.pop();
	}
	return a;
}

/**
 * A proof that N and D are coprime, by Euclid's algorithm modulo a prime p that does not divide lc(D): a
 * common factor g over the rationals divides both in Z[x] (Gauss's lemma) with lc(g) | lc(D), so its image
 * mod p keeps its degree and divides both images; a constant gcd mod p therefore rules it out (the
 * argument behind modular gcd algorithms: Knuth, TAOCP vol. 2, 3rd ed., section 4.6.1, from memory). False means "not
 * shown", never "not coprime".
 */
function coprimeModular(N: readonly bigint[], D: readonly bigint[]): boolean {
	for (const p of PRIMES) {
		if (D[D.length - 1] % BigInt(p) === 0n) continue;
		let a = modP(D, p);
		let b = modP(N, p);
		if (b.length === 0) continue;
		while (b.length > 1) {
			const r = remM(a, b, p);
			a = b;
			b = r;
			if (b.length === 0) break;
		}
		if (b.length === 1) return true;
	}
	return false;
}

function rootsOf(c: readonly bigint[]): { re: number; im: number }[] {
	let maxBits = 0;
	for (const v of c) maxBits = Math.max(maxBits, bitLength(v));
	return polyRoots(c.map((v) => dyadicToNumber(v, -maxBits))).map((r) => ({ re: r.re, im: r.im }));
}

const hiddenCache = new WeakMap<Plant, HiddenModes>();

/** The hidden modes of the model as entered (see the head of this file). */
export function hiddenModes(plant: Plant, model: Model): HiddenModes {
	const hit = hiddenCache.get(plant);
	if (hit) return hit;
	const { N, D } = plant.tf;
	let g: bigint[] = [1n];
	if (isZero(N)) g = D.c.slice();
	else if (degree(N) > 0 && !coprimeModular(N.c, D.c)) g = gcdPoly(N.c, D.c);
	const deg = g.length - 1;
	const out: HiddenModes = {
		degree: deg,
		unstable: deg > 0 && !isHurwitzExact(g).hurwitz,
		modes: deg > 0 ? rootsOf(g) : [],
		kind: model.kind,
		zeroGain: isZero(N)
	};
	hiddenCache.set(plant, out);
	return out;
}

const hiddenWords: Record<Model['kind'], string> = {
	tf: 'a factor common to the numerator and the denominator as entered, i.e. a pole cancelled by a zero',
	zpk: 'a zero entered on a pole',
	ss: 'an eigenvalue of A that is uncontrollable or unobservable'
};

function modeText(m: { re: number; im: number }): string {
	const re = fmt(Math.abs(m.re) < 1e-12 * Math.hypot(m.re, m.im) ? 0 : m.re);
	if (Math.abs(m.im) <= 1e-12 * Math.max(1, Math.abs(m.re))) return re;
	return `${re} ± ${fmt(Math.abs(m.im))}j`;
}

/** The offending hidden modes (largest real part first), in words. */
function unstableModesText(h: HiddenModes): string {
	const sorted = [...h.modes].sort((a, b) => b.re - a.re);
	const scale = Math.max(1, ...sorted.map((m) => Math.hypot(m.re, m.im)));
	let bad = sorted.filter((m) => m.re >= -1e-9 * scale && m.im >= -1e-12 * scale);
	if (bad.length === 0) bad = sorted.slice(0, 1);
	return bad
		.slice(0, 4)
		.map((m) => `s = ${modeText(m)}`)
		.join(', ');
}

export function hiddenModeReason(h: HiddenModes): string {
	const words = h.zeroGain
		? 'G is identically zero, so no mode of the model reaches the output'
		: hiddenWords[h.kind];
	return `The model as entered has a hidden mode at ${unstableModesText(h)} (${words}) with non-negative real part. No feedback reaches a hidden mode, so the loop is unstable for every gain and every nonlinearity, whatever the transfer function after cancellation says; enter a minimal model if the mode is not physical.`;
}

// ---------------------------------------------------------------------------------------------------------
// The preflight every check goes through (run.ts)

const PREFLIGHT_ASSUMPTIONS =
	'Decided on the model as entered, including modes its transfer function does not show, before any frequency test.';

function sectorText(k1: number, k2: number): string {
	return `[${fmt(k1)}, ${k2 === Infinity ? 'infinity' : fmt(k2)}]`;
}

function refuse(
	check: Check,
	plant: Plant,
	reason: string,
	numbers: Record<string, number | string | null>
): CheckResult {
	const lower = `${reason.charAt(0).toLowerCase()}${reason.slice(1)}`;
	const common = { verdict: 'fail' as const, numbers, reason, assumptions: PREFLIGHT_ASSUMPTIONS };
	switch (check.type) {
		case 'circle':
			return {
				type: 'circle',
				...common,
				criticalFrequency: null,
				margin: null,
				explanation: `Not proved for the sector ${sectorText(check.sector[0], check.sector[1])}: ${lower}`
			};
		case 'popov':
		case 'tsypkin':
			return {
				type: check.type,
				...common,
				q: null,
				threshold: null,
				criticalFrequency: null,
				margin: null,
				explanation: `Not proved for the sector ${sectorText(0, check.sector[1])}: ${lower}`
			};
		case 'max-sector':
			return {
				type: 'max-sector',
				...common,
				threshold: null,
				criticalFrequency: null,
				linearGainIntervals: linearGainIntervals(plant).map((g) => [enc(g.low)!, enc(g.high)!]),
				explanation: `No sector with the lower bound ${fmt(check.lower)} can be proved: ${lower}`
			};
		case 'positive-real':
			return {
				type: 'positive-real',
				...common,
				class: 'neither',
				criticalFrequency: null,
				margin: null,
				explanation: `G as entered is not positive real: ${lower}`
			};
		case 'margins':
			return {
				type: 'margins',
				...common,
				criticalFrequency: null,
				margin: null,
				linearGainIntervals: linearGainIntervals(plant).map((g) => [enc(g.low)!, enc(g.high)!]),
				explanation: `No margins: ${lower}`
			};
	}
}

function hiddenNumbers(h: HiddenModes): Record<string, number | string | null> {
	return {
		hiddenModeCount: h.degree,
		hiddenModes: h.modes.map(modeText).join(', '),
		hiddenModeMaxRealPart: h.modes.reduce((m, r) => Math.max(m, r.re), -Infinity)
	};
}

/** The gain range a check's sector covers, for the well-posedness test; null for positive-real. */
function sectorOf(check: Check): [number, number] | null {
	switch (check.type) {
		case 'circle':
			return check.sector;
		case 'popov':
		case 'tsypkin':
			return [0, check.sector[1]];
		case 'max-sector':
			return [check.lower, check.lower];
		case 'margins':
			return [1, 1];
		case 'positive-real':
			return null;
	}
}

/**
 * The failure every check reports before its own test, or null when the check may run: the sector's
 * well-posedness first (for max-sector at k1 itself; the bound above is capped by maxSectorLimits), then
 * hidden modes with non-negative real part.
 */
export function preflight(plant: Plant, model: Model, check: Check): CheckResult | null {
	const sector = sectorOf(check);
	if (sector) {
		const wp = wellPosedOn(plant, sector[0], sector[1]);
		if (!wp.wellPosed) {
			const where =
				check.type === 'margins'
					? 'the unit feedback gain itself'
					: check.type === 'max-sector'
						? 'the lower bound itself'
						: `inside the closed sector ${sectorText(sector[0], sector[1])}`;
			return refuse(check, plant, illPosedReason(plant, wp.gain!, where), {
				wellPosed: 'no',
				illPosedGain: enc(wp.gain),
				directFeedthrough: feedthrough(plant)!.value
			});
		}
	}
	const h = hiddenModes(plant, model);
	if (h.unstable) return refuse(check, plant, hiddenModeReason(h), hiddenNumbers(h));
	if (check.type === 'popov' && h.degree > 0) {
		// Popov's theorem is stated for a minimal realisation (Khalil, 3rd ed., Theorem 7.3: (A, B)
		// controllable, (A, C) observable); a hidden mode, even a decaying one, is outside it.
		const reason = `The Popov criterion needs a minimal realisation, and the model as entered has a hidden mode at ${h.modes
			.slice(0, 4)
			.map((m) => `s = ${modeText(m)}`)
			.join(', ')} (${hiddenWords[h.kind]}). Enter the minimal model, or use the circle criterion.`;
		return {
			type: 'popov',
			verdict: 'inconclusive',
			q: null,
			threshold: null,
			criticalFrequency: null,
			margin: null,
			numbers: hiddenNumbers(h),
			explanation: reason,
			reason,
			assumptions: PREFLIGHT_ASSUMPTIONS
		};
	}
	return null;
}

/**
 * Is -1/q a root of the polynomial c (ascending, exact)? q^n c(-1/q) = sum_i c_i (-1)^i q^(n-i), exact for
 * a dyadic q = m 2^e (every term shifted to the common exponent min(0, e n)).
 */
function rootAtMinusInverse(c: readonly bigint[], qIn: number): boolean {
	if (!(qIn > 0) || !Number.isFinite(qIn)) return false;
	const q = dyadicOf(qIn);
	const n = c.length - 1;
	const base = Math.min(0, q.e) * n;
	let acc = 0n;
	for (let i = 0; i <= n; i++) {
		const k = n - i;
		const term = (i % 2 ? -c[i] : c[i]) * q.m ** BigInt(k);
		acc += term << BigInt(q.e * k - base);
	}
	return acc === 0n;
}

/**
 * Popov multipliers to try, in scaled units, with any q that puts -1/q on an eigenvalue of A replaced by
 * two neighbours: Khalil, 3rd ed., Theorem 7.3 excludes such q, and the Popov inequality is continuous in
 * q, so a strict pass at q carries over to q (1 +- 2^-20) whenever the exact test there says so.
 */
export function popovMultipliers(plant: Plant, qs: readonly number[]): number[] {
	const out: number[] = [];
	for (const q of qs) {
		if (!rootAtMinusInverse(plant.Ds.c, q)) out.push(q);
		else
			for (const f of [1 + 2 ** -20, 1 - 2 ** -20])
				if (!rootAtMinusInverse(plant.Ds.c, q * f)) out.push(q * f);
	}
	return out;
}

/**
 * After a Popov pass, the same condition on the reported q (rad/s units): with a minimal realisation the
 * eigenvalues of A are the roots of D. A pass that meets an eigenvalue is reported inconclusive rather
 * than claimed (popovMultipliers keeps the search away from them, so this is a last guard).
 */
export function popovAfter(plant: Plant, r: CheckResult): CheckResult {
	if (r.verdict !== 'pass' || typeof r.q !== 'number' || !rootAtMinusInverse(plant.tf.D.c, r.q)) return r;
	const reason = `The multiplier found, q = ${fmt(r.q)} s, puts -1/q on an eigenvalue of A, which the Popov criterion excludes (Khalil, 3rd ed., Theorem 7.3); no pass is claimed.`;
	return { ...r, verdict: 'inconclusive', q: null, explanation: reason, reason };
}

// ---------------------------------------------------------------------------------------------------------
// Max-sector: what bounds the largest sector before the search

export interface MaxSectorLimits {
	/** -1/G(inf) when it lies above k1: the largest sector stops short of it. */
	illPosedAbove: number | null;
	/** Proved exactly: every finite k2 > k1 passes the circle test. */
	unbounded: boolean;
	/** With `unbounded`: whether the sector [k1, infinity] itself passes. */
	infiniteSectorProved?: boolean;
}

/**
 * Exact test of "every finite k2 > k1 passes" (head of this file, item 3). Needs Q = D + k1 N Hurwitz and
 * 1 + k G(inf) of one sign for every k >= k1 (then Z(inf) > 0 for every finite k2); B > 0 on [0, inf) is decided by
 * the certified positivity test, B >= 0 with touching roots by counting the roots of odd multiplicity.
 */
function unboundedAbove(plant: Plant, k1: number): boolean {
	const ft = feedthrough(plant);
	// Z(inf) = (1 + k2 G(inf))/(1 + k1 G(inf)) > 0 for every k2 > k1 iff both ends have one sign.
	if (ft && signOnePlusKD(ft, k1) * signOnePlusKD(ft, Infinity) <= 0) return false;
	const { Ns, Ds } = plant;
	const Q = isZero(Ns) ? Ds : addD(Ds, scaleD(Ns, dyadicOf(k1)));
	if (degree(Q) < plant.order) return false;
	const h = certifiedHurwitz(Q);
	if (!h.hurwitz || h.undecided) return false;
	if (isZero(Ns)) return true;
	const B = evenRealPart(Ns, Q);
	if (isZero(B)) return true;
	const c = B.c;
	if (c[c.length - 1] < 0n || c[0] < 0n) return false;
	const pos = certifiedPositiveOnHalfLine(B);
	if (pos.positive) return true;
	// B(x) < 0 at a witness bounds k2; B(x) = 0 may be a touching root, which only the exact count tells.
	if (pos.undecided || (pos.witness !== undefined && signAt(c, dyadicOf(pos.witness)) < 0)) return false;
	let bits = 0;
	for (const v of c) bits = Math.max(bits, bitLength(v));
	if (bits * c.length > EXACT_BUDGET) return false;
	return oddMultiplicityPositiveRoots(c) === 0;
}

/** Limits on the largest sector with lower bound k1 (called after preflight has passed). */
export function maxSectorLimits(plant: Plant, k1: number): MaxSectorLimits {
	const ft = feedthrough(plant);
	const illPosedAbove = ft && ft.gain > k1 ? ft.gain : null;
	if (illPosedAbove !== null) return { illPosedAbove, unbounded: false };
	if (!unboundedAbove(plant, k1)) return { illPosedAbove: null, unbounded: false };
	return { illPosedAbove: null, unbounded: true, infiniteSectorProved: circleCore(plant, k1, Infinity).pass };
}

/**
 * The search's result with the limits applied: unbounded is reported as such; a bound at or beyond the
 * ill-posed gain is replaced by a value just below it that the exact circle test passes (the passing k2
 * form an interval: Re Z is affine in k2 with Re Z = 1 at k2 = k1), and the gain itself is the proved fail.
 */
export function applyMaxSectorLimits(
	plant: Plant,
	k1: number,
	limits: MaxSectorLimits,
	search: () => MaxSectorCore
): MaxSectorCore {
	if (limits.unbounded)
		return { feasible: true, threshold: Infinity, failAbove: null, estimate: Infinity, argminX: null };
	const core = search();
	const kIll = limits.illPosedAbove;
	if (kIll === null) return core;
	const out = { ...core };
	if (out.failAbove === null || out.failAbove > kIll) out.failAbove = kIll;
	if (out.threshold !== null && out.threshold >= kIll) {
		out.threshold = null;
		for (const f of [1e-12, 1e-10, 1e-8, 1e-6, 1e-4]) {
			const t = kIll - (kIll - k1) * f;
			if (t > k1 && t < kIll && circleCore(plant, k1, t).pass) {
				out.threshold = t;
				break;
			}
		}
		out.feasible = out.threshold !== null;
	}
	return out;
}
