// The frequency condition of the circle criterion for a fixed lower bound k1, shared by the circle and
// largest-sector checks.
//
// With G = N/D and Q = D + k1 N, Re Z(jw) for Z = (1 + k2 G)/(1 + k1 G) is
//     Re Z = E(x; k2) / M(x),  E = Re[(D + k2 N)(jw) Q(-jw)] = M + (k2 - k1) B,  M = |Q(jw)|^2,  B = Re[N Q*],
// so Re Z = 1 + (k2 - k1) r(x) with r = B / M = Re[G / (1 + k1 G)] (for k2 = infinity, Re Z = r itself).
// Everything about the frequency condition for any k2 therefore follows from the minimum of the one function
// r on x = w^2 in [0, inf): its location is the critical frequency of every sector with this k1, and the
// largest k2 is k1 - 1/min r (Khalil, Nonlinear Systems, 3rd ed., section 7.1; the k1 = 0 case is
// k2* = -1/min Re G). The minimum is located from the exact stationary points of r, the roots of
// S = B'M - BM' (a polynomial in x), bracketed by exact sign changes of S at dyadic points; candidates come
// from a sweep of r evaluated as Re[N(jw)/Q(jw)] in complex floating point (much better conditioned near
// lightly damped modes than the squared polynomials in x) and from the resonances of the roots of Q.
import { tick } from './budget';
import { type DPoly, type Dyadic, addD, dyadicOf, isZero, log2Abs, scaleD } from './exact';
import { certifiedHurwitz, type HurwitzResult } from './certify';
import { evalJw, toFloatCommon } from './fpoly';
import type { Plant } from './model';
import type { C } from './roots';

/** Exact dyadic arithmetic on values (not polynomials). */
function mulV(a: Dyadic, b: Dyadic): Dyadic {
	return { m: a.m * b.m, e: a.e + b.e };
}
function addV(a: Dyadic, b: Dyadic): Dyadic {
	if (a.m === 0n) return b;
	if (b.m === 0n) return a;
	const e = Math.min(a.e, b.e);
	return { m: (a.m << BigInt(a.e - e)) + (b.m << BigInt(b.e - e)), e };
}
const negV = (a: Dyadic): Dyadic => ({ m: -a.m, e: a.e });
const signV = (a: Dyadic) => (a.m > 0n ? 1 : a.m < 0n ? -1 : 0);

/** a / b as a double (correct to a few ulps), without overflow for huge mantissas. */
export function ratioToNumber(a: Dyadic, b: Dyadic): number {
	if (a.m === 0n) return 0;
	const la = log2Abs(a.m, 0);
	const lb = log2Abs(b.m, 0);
	const ta = Math.max(0, Math.floor(la) - 62);
	const tb = Math.max(0, Math.floor(lb) - 62);
	const ma = Number(a.m >> BigInt(ta));
	const mb = Number(b.m >> BigInt(tb));
	const k = a.e + ta - (b.e + tb);
	let q = ma / mb;
	// ldexp in steps to stay in range
	let kk = k;
	while (kk > 1000) {
		q *= 2 ** 1000;
		kk -= 1000;
	}
	while (kk < -1000) {
		q *= 2 ** -1000;
		kk += 1000;
	}
	return q * 2 ** kk;
}

/** Exact value and derivative of sum c_i 2^ce x^i at a dyadic x (Horner). */
function hornerV(c: readonly bigint[], ce: number, x: Dyadic): { v: Dyadic; d: Dyadic } {
	let v: Dyadic = { m: 0n, e: 0 };
	let d: Dyadic = { m: 0n, e: 0 };
	for (let i = c.length - 1; i >= 0; i--) {
		d = addV(mulV(d, x), v);
		v = addV(mulV(v, x), { m: c[i], e: ce });
	}
	return { v, d };
}

/** Exact value of sum c_i 2^ce x^i at a dyadic x (Horner). */
function hornerOnly(c: readonly bigint[], ce: number, x: Dyadic): Dyadic {
	let v: Dyadic = { m: 0n, e: 0 };
	for (let i = c.length - 1; i >= 0; i--) v = addV(mulV(v, x), { m: c[i], e: ce });
	return v;
}

/** Complex Horner p(jw) with Higham's running bound gamma_(4n) sum |p_k| w^k on its rounding error. */
function evalJwBounded(p: readonly number[], w: number): { re: number; im: number; err: number } {
	const { re, im } = evalJw(p, w);
	let s = 0;
	for (let k = p.length - 1; k >= 0; k--) s = s * w + Math.abs(p[k]);
	return { re, im, err: 8 * (p.length + 1) * 2 ** -53 * s };
}

/** Even and odd parts: p(jw) = pe(x) + j w po(x), x = w^2 (exact integer coefficients, common 2^e). */
export function evenOddParts(p: DPoly): { e: bigint[]; o: bigint[]; x: number } {
	const e: bigint[] = [];
	const o: bigint[] = [];
	for (let i = 0; i < p.c.length; i++) {
		const k = Math.floor(i / 2);
		const v = k % 2 ? -p.c[i] : p.c[i];
		if (i % 2 === 0) e.push(v);
		else o.push(v);
	}
	return { e, o, x: p.e };
}

export interface FrequencyMinimum {
	/** min over x >= 0 of r(x) (the infimum when it is approached only as x -> infinity). */
	r: number;
	/** Where (scaled x = (w/w0)^2); null when the infimum is the limit at infinity. */
	x: number | null;
	/** Exact bracket [lo, hi] of the stationary point of r (roots of S), when it was bracketed. */
	bracket?: [number, number];
}

/** Everything about the frequency condition for one plant and one k1 (cached per plant and k1). */
export interface CircleFamily {
	k1: number;
	Q: DPoly;
	hurwitz: HurwitzResult;
	/** Float copies of N and Q on one common scale (complex evaluation of r). */
	Nf: number[];
	Qf: number[];
	/** Numerical minimum of r (filled by `familyMinimum`). */
	min?: FrequencyMinimum;
	/** Exact values of r's numerator and denominator, and of the sign of S, at dyadic x. */
	exactR(x: number): { B: Dyadic; M: Dyadic; S: number };
	/** r(w) = Re[N(jw)/Q(jw)]: complex floating point where its error bound allows, else exact. */
	rAtW(w: number): number;
	/** N(jw)/Q(jw), the same way (for k1 = 0 this is G(jw)). */
	gAtW(w: number): { re: number; im: number };
}

const families = new WeakMap<Plant, Map<number, CircleFamily>>();

export function circleFamily(plant: Plant, k1: number): CircleFamily {
	let m = families.get(plant);
	if (!m) {
		m = new Map();
		families.set(plant, m);
	}
	const hit = m.get(k1);
	if (hit) return hit;
	const { Ns, Ds } = plant;
	const Q = isZero(Ns) || k1 === 0 ? Ds : addD(Ds, scaleD(Ns, dyadicOf(k1)));
	const hurwitz = certifiedHurwitz(Q);
	const [Nf, Qf] = toFloatCommon([Ns, Q]);
	const n = evenOddParts(Ns);
	const q = evenOddParts(Q);
	const exactR = (xv: number) => {
		const x = dyadicOf(xv);
		const ne = hornerV(n.e, n.x, x);
		const no = hornerV(n.o, n.x, x);
		const qe = hornerV(q.e, q.x, x);
		const qo = hornerV(q.o, q.x, x);
		// B = ne qe + x no qo; M = qe^2 + x qo^2 (Re[N Q*] and |Q|^2 from the even and odd parts)
		const B = addV(mulV(ne.v, qe.v), mulV(x, mulV(no.v, qo.v)));
		const M = addV(mulV(qe.v, qe.v), mulV(x, mulV(qo.v, qo.v)));
		// B' = ne' qe + ne qe' + no qo + x (no' qo + no qo'); M' = 2 qe qe' + qo^2 + 2 x qo qo'
		const dB = addV(
			addV(mulV(ne.d, qe.v), mulV(ne.v, qe.d)),
			addV(mulV(no.v, qo.v), mulV(x, addV(mulV(no.d, qo.v), mulV(no.v, qo.d))))
		);
		const two: Dyadic = { m: 2n, e: 0 };
		const dM = addV(
			addV(mulV(two, mulV(qe.v, qe.d)), mulV(qo.v, qo.v)),
			mulV(two, mulV(x, mulV(qo.v, qo.d)))
		);
		const S = signV(addV(mulV(dB, M), negV(mulV(B, dM))));
		return { B, M, S };
	};
	// N(jw)/Q(jw) exactly at x = w^2: N Q* = (ne qe + x no qo) + j w (no qe - ne qo), |Q|^2 = qe^2 + x qo^2.
	const exactG = (w: number) => {
		const x = dyadicOf(w * w);
		const ne = hornerOnly(n.e, n.x, x);
		const no = hornerOnly(n.o, n.x, x);
		const qe = hornerOnly(q.e, q.x, x);
		const qo = hornerOnly(q.o, q.x, x);
		const B = addV(mulV(ne, qe), mulV(x, mulV(no, qo)));
		const I = addV(mulV(no, qe), negV(mulV(ne, qo)));
		const M = addV(mulV(qe, qe), mulV(x, mulV(qo, qo)));
		return { re: ratioToNumber(B, M), im: w * ratioToNumber(I, M) };
	};
	// Floating evaluation where it is accurate to 1e-9 (by its running error bound), else exact: near a
	// cluster of lightly damped modes |Q(jw)| is far below the size of its terms and the float is noise.
	const gAtW = (w: number) => {
		const a = evalJwBounded(Nf, w);
		const b = evalJwBounded(Qf, w);
		const qa = Math.hypot(b.re, b.im);
		const na = Math.hypot(a.re, a.im);
		if (b.err > 1e-9 * qa || (na > 0 && a.err > 1e-9 * na) || (na === 0 && a.err > 0)) {
			tick();
			return exactG(w);
		}
		const d = b.re * b.re + b.im * b.im;
		return { re: (a.re * b.re + a.im * b.im) / d, im: (a.im * b.re - a.re * b.im) / d };
	};
	const rAtW = (w: number) => gAtW(w).re;
	const fam: CircleFamily = { k1, Q, hurwitz, Nf, Qf, exactR, rAtW, gAtW };
	m.set(k1, fam);
	return fam;
}

/** Sweep range in w around the root magnitudes of Q (scaled units). */
function wRange(roots: readonly C[]): [number, number] {
	let lo = Infinity;
	let hi = 0;
	for (const r of roots) {
		const m = Math.hypot(r.re, r.im);
		if (m > 0) {
			lo = Math.min(lo, m);
			hi = Math.max(hi, m);
		}
	}
	if (!(hi > 0)) return [1e-3, 1e3];
	return [lo * 1e-2, hi * 1e2];
}

const PHI = (Math.sqrt(5) - 1) / 2;

/** Golden-section minimum of f on [a, b] (Kiefer 1953) to relative width `tol`. */
export function golden(
	f: (w: number) => number,
	a: number,
	b: number,
	tol: number
): { w: number; v: number } {
	let c = b - PHI * (b - a);
	let d = a + PHI * (b - a);
	let fc = f(c);
	let fd = f(d);
	for (let it = 0; it < 200 && b - a > tol * Math.abs(b); it++) {
		if (fc < fd) {
			b = d;
			d = c;
			fd = fc;
			c = b - PHI * (b - a);
			fc = f(c);
		} else {
			a = c;
			c = d;
			fc = fd;
			d = a + PHI * (b - a);
			fd = f(d);
		}
	}
	const w = (a + b) / 2;
	return { w, v: f(w) };
}

/**
 * Refine a minimum of r near x0 to an exact bracket of a root of S (sign - to +), relative width 1e-13.
 * Returns null when no sign change is found near x0 (then the floating location stands).
 */
function exactStationary(fam: CircleFamily, x0: number): [number, number] | null {
	for (const d of [1e-8, 1e-6, 1e-4, 1e-2]) {
		let lo = x0 * (1 - d);
		let hi = x0 * (1 + d);
		const sl = fam.exactR(lo).S;
		const sh = fam.exactR(hi).S;
		if (sl < 0 && sh > 0) {
			for (let i = 0; i < 80 && hi - lo > 1e-13 * hi; i++) {
				tick();
				const mid = (lo + hi) / 2;
				if (mid <= lo || mid >= hi) break;
				const s = fam.exactR(mid).S;
				if (s === 0) return [mid, mid];
				if (s < 0) lo = mid;
				else hi = mid;
			}
			return [lo, hi];
		}
		if (sl > 0 || sh < 0) continue;
	}
	return null;
}

/** Exact r at x as a double. */
export function exactRValue(fam: CircleFamily, x: number): number {
	const { B, M } = fam.exactR(x);
	return ratioToNumber(B, M);
}

/** The exact stationary point of r near x0 (a floating minimum), with r computed exactly there. */
function exactMinimumAt(fam: CircleFamily, x0: number): FrequencyMinimum {
	const br = exactStationary(fam, x0);
	const x = br ? (br[0] + br[1]) / 2 : x0;
	return { r: exactRValue(fam, x), x, ...(br ? { bracket: br } : {}) };
}

/**
 * The minimum of r on [0, inf): a logarithmic sweep plus the resonances of Q's roots, every local minimum
 * of the samples refined (golden section between its neighbours, then exactly), the best kept; x = 0 and the
 * limit at infinity compared. Numerical in where it looks; the check that uses it proves its verdict
 * separately (a witness where E < 0 exactly, or certified root isolation of E).
 */
export function familyMinimum(fam: CircleFamily): FrequencyMinimum {
	if (fam.min) return fam.min;
	const roots = fam.hurwitz.roots;
	const [lo, hi] = wRange(roots);
	const ws: number[] = [];
	const N = 160;
	for (let i = 0; i <= N; i++) ws.push(lo * (hi / lo) ** (i / N));
	for (const q of roots) {
		if (!(q.im > 0)) continue;
		// A lightly damped root gives a dip of width about |Re q| around w = Im q.
		const h = Math.max(Math.abs(q.re), 1e-300);
		for (const k of [-4, -2, -1, -0.5, 0, 0.5, 1, 2, 4]) {
			const w = q.im + k * h;
			if (w > 0) ws.push(w);
		}
		ws.push(Math.sqrt(Math.max(0, q.im * q.im - q.re * q.re)));
	}
	let pts = [...new Set(ws.filter((w) => w > 0 && Number.isFinite(w)))].sort((a, b) => a - b);
	let vals = pts.map((w) => fam.rAtW(w));
	// Where neighbouring samples differ by much of the total range, a narrow dip may sit between them (the
	// roots of Q, and so the resonances above, are inaccurate for clustered modes): halve those intervals
	// until no step is large, up to 4000 samples.
	for (let pass = 0; pass < 24 && pts.length < 4000; pass++) {
		let mn = Infinity;
		let mx = -Infinity;
		for (const v of vals)
			if (Number.isFinite(v)) {
				mn = Math.min(mn, v);
				mx = Math.max(mx, v);
			}
		const tol = 0.02 * (mx - mn);
		const np: number[] = [];
		const nv: number[] = [];
		let added = 0;
		for (let i = 0; i < pts.length; i++) {
			np.push(pts[i]);
			nv.push(vals[i]);
			if (
				i + 1 < pts.length &&
				!(Math.abs(vals[i + 1] - vals[i]) <= tol) &&
				pts[i + 1] - pts[i] > 1e-9 * pts[i]
			) {
				tick();
				const w = (pts[i] + pts[i + 1]) / 2;
				np.push(w);
				nv.push(fam.rAtW(w));
				added++;
			}
		}
		pts = np;
		vals = nv;
		if (added === 0) break;
	}
	let best: FrequencyMinimum = { r: fam.exactR(0).M.m === 0n ? Infinity : exactRValue(fam, 0), x: 0 };
	// Local minima of the samples, the lowest first; refine the 8 lowest.
	const locals: number[] = [];
	for (let i = 0; i < pts.length; i++) {
		const l = i > 0 ? vals[i - 1] : Infinity;
		const r = i + 1 < pts.length ? vals[i + 1] : Infinity;
		if (vals[i] <= l && vals[i] <= r && Number.isFinite(vals[i])) locals.push(i);
	}
	locals.sort((i, j) => vals[i] - vals[j]);
	// Golden section on the 8 lowest, then the exact stationary point for those within reach of the best.
	const refined: { a: number; b: number; w: number; v: number }[] = [];
	for (const i of locals.slice(0, 8)) {
		const a = i > 0 ? pts[i - 1] : pts[i] / 2;
		const b = i + 1 < pts.length ? pts[i + 1] : pts[i] * 2;
		const g = golden(fam.rAtW, a, b, 1e-10);
		if (g.w > 0 && Number.isFinite(g.v)) refined.push({ a, b, ...g });
	}
	refined.sort((p, q) => p.v - q.v);
	const top = refined.length ? refined[0].v : Infinity;
	for (const c of refined.slice(0, 3)) {
		if (c !== refined[0] && c.v > top + 1e-6 * Math.abs(top)) break;
		const m = exactMinimumAt(fam, c.w * c.w);
		if (m.r < best.r) best = m;
	}
	// Limit at infinity: r -> lc(N)/lc(Q) x^(deg N - deg Q)... in scaled units, from the float copies.
	const dN = fam.Nf.length - 1;
	const dQ = fam.Qf.length - 1;
	const lim = dN < 0 ? 0 : dN < dQ ? 0 : fam.Nf[dN] / fam.Qf[dQ];
	if (lim < best.r) best = { r: lim, x: null };
	fam.min = best;
	return best;
}

/** Add a point found elsewhere (e.g. by root isolation) and keep the lower minimum. */
export function familyConsider(fam: CircleFamily, x: number): FrequencyMinimum {
	const cur = familyMinimum(fam);
	const w = Math.sqrt(x);
	const g = golden(fam.rAtW, w * 0.99, w * 1.01, 1e-10);
	const m = exactMinimumAt(fam, g.w * g.w);
	const at = exactRValue(fam, x);
	const alt = at < m.r ? { r: at, x } : m;
	if (alt.r < cur.r) fam.min = alt;
	return fam.min!;
}

/**
 * Re[P(jw)/Q(jw)] and Im[P(jw)/Q(jw)] / w at x = w^2 (a dyadic), computed exactly and rounded once at the end:
 * P Q* = (pe qe + x po qo) + j w (po qe - pe qo), |Q|^2 = qe^2 + x qo^2.
 */
export function exactRatioAtX(P: DPoly, Q: DPoly, x: Dyadic): { re: number; imOverW: number } {
	const p = evenOddParts(P);
	const q = evenOddParts(Q);
	const pe = hornerOnly(p.e, p.x, x);
	const po = hornerOnly(p.o, p.x, x);
	const qe = hornerOnly(q.e, q.x, x);
	const qo = hornerOnly(q.o, q.x, x);
	const B = addV(mulV(pe, qe), mulV(x, mulV(po, qo)));
	const I = addV(mulV(po, qe), negV(mulV(pe, qo)));
	const M = addV(mulV(qe, qe), mulV(x, mulV(qo, qo)));
	return { re: ratioToNumber(B, M), imOverW: ratioToNumber(I, M) };
}
