// Floating-point polynomial roots and rigorous inclusion disks.
//
// Roots are found by the Aberth–Ehrlich simultaneous iteration (Aberth 1973, Math. Comp. 27; Bini 1996,
// "Numerical computation of polynomial zeros by means of Aberth's method", Numer. Algorithms 13) with
// Newton-polygon starting points (Bini 1996, section 4). Roots found here are approximations; they are
// turned into proofs only through `inclusionDisks` (Smith's theorem) below, or used for reporting.
//
// Coefficient arrays are ASCENDING.
import { tick } from './budget';

export interface C {
	re: number;
	im: number;
}

const U = 2 ** -53;

function hornerC(a: readonly number[], zr: number, zi: number): [number, number, number, number] {
	// returns p(z) and p'(z)
	const n = a.length - 1;
	let pr = a[n];
	let pi = 0;
	let dr = 0;
	let di = 0;
	for (let k = n - 1; k >= 0; k--) {
		const ndr = dr * zr - di * zi + pr;
		const ndi = dr * zi + di * zr + pi;
		dr = ndr;
		di = ndi;
		const npr = pr * zr - pi * zi + a[k];
		const npi = pr * zi + pi * zr;
		pr = npr;
		pi = npi;
	}
	return [pr, pi, dr, di];
}

function absSum(a: readonly number[], r: number): number {
	let s = 0;
	for (let k = a.length - 1; k >= 0; k--) s = s * r + Math.abs(a[k]);
	return s;
}

/**
 * Newton correction p(z)/p'(z), evaluated through the reversed polynomial when |z| > 1 to avoid overflow.
 * `small` is set when |p(z)| is below the rounding level of its own evaluation (the stopping rule of
 * Bini 1996, section 3): further iterations cannot improve z.
 */
function newtonCorrection(
	a: readonly number[],
	rev: readonly number[],
	zr: number,
	zi: number
): C & { small?: boolean } {
	const n = a.length - 1;
	const m2 = zr * zr + zi * zi;
	if (m2 <= 1) {
		const [pr, pi, dr, di] = hornerC(a, zr, zi);
		const small = Math.sqrt(pr * pr + pi * pi) <= 4 * (n + 1) * U * absSum(a, Math.sqrt(m2));
		const d2 = dr * dr + di * di;
		if (d2 === 0) return { re: 0, im: 0, small };
		return { re: (pr * dr + pi * di) / d2, im: (pi * dr - pr * di) / d2, small };
	}
	// y = 1/z; p(z) = z^n r(y); p'(z)/p(z) = y (n - y r'(y)/r(y)); correction = z / (n - y r'/r)
	const yr = zr / m2;
	const yi = -zi / m2;
	const [rr, ri, sr, si] = hornerC(rev, yr, yi);
	const small = Math.sqrt(rr * rr + ri * ri) <= 4 * (n + 1) * U * absSum(rev, 1 / Math.sqrt(m2));
	const r2 = rr * rr + ri * ri;
	if (r2 === 0) return { re: 0, im: 0, small };
	// t = y r'/r
	const qr = (sr * rr + si * ri) / r2;
	const qi = (si * rr - sr * ri) / r2;
	const tr = yr * qr - yi * qi;
	const ti = yr * qi + yi * qr;
	const dr = n - tr;
	const di = -ti;
	const d2 = dr * dr + di * di;
	if (d2 === 0) return { re: 0, im: 0, small };
	return { re: (zr * dr + zi * di) / d2, im: (zi * dr - zr * di) / d2, small };
}

/** Starting points from the upper convex hull of (i, log|a_i|) (Bini 1996, section 4). */
function initialGuesses(a: readonly number[]): C[] {
	const n = a.length - 1;
	const pts: [number, number][] = [];
	for (let i = 0; i <= n; i++) if (a[i] !== 0) pts.push([i, Math.log(Math.abs(a[i]))]);
	const hull: [number, number][] = [];
	for (const p of pts) {
		while (hull.length >= 2) {
			const [x1, y1] = hull[hull.length - 2];
			const [x2, y2] = hull[hull.length - 1];
			if ((x2 - x1) * (p[1] - y1) - (y2 - y1) * (p[0] - x1) >= 0) hull.pop();
			else break;
		}
		hull.push(p);
	}
	const out: C[] = [];
	const sigma = 0.7;
	for (let h = 0; h < hull.length - 1; h++) {
		const [i, yi] = hull[h];
		const [k, yk] = hull[h + 1];
		const cnt = k - i;
		const r = Math.exp((yi - yk) / cnt);
		for (let j = 0; j < cnt; j++) {
			const ang = (2 * Math.PI * j) / cnt + (2 * Math.PI * h) / n + sigma;
			out.push({ re: r * Math.cos(ang), im: r * Math.sin(ang) });
		}
	}
	return out;
}

/**
 * All roots of a real polynomial (ascending coefficients, a[n] != 0). Zero roots from trailing zeros are
 * returned exactly. Result is sorted by real part, then imaginary part.
 */
export function polyRoots(aIn: readonly number[], maxIter = 500): C[] {
	let a = aIn.slice();
	while (a.length > 0 && a[a.length - 1] === 0) a.pop();
	if (a.length <= 1) return [];
	const zerosAtOrigin: C[] = [];
	while (a.length > 1 && a[0] === 0) {
		a = a.slice(1);
		zerosAtOrigin.push({ re: 0, im: 0 });
	}
	const n = a.length - 1;
	if (n === 0) return zerosAtOrigin;
	// Normalise magnitudes by a power of two to keep Horner sums in range.
	let mx = 0;
	for (const v of a) mx = Math.max(mx, Math.abs(v));
	const sc = 2 ** -Math.round(Math.log2(mx));
	a = a.map((v) => v * sc);
	if (n === 1) return [...zerosAtOrigin, { re: -a[0] / a[1], im: 0 }];
	if (n === 2) {
		const [c0, c1, c2] = a;
		const disc = c1 * c1 - 4 * c2 * c0;
		let roots: C[];
		if (disc >= 0) {
			const q = -0.5 * (c1 + Math.sign(c1 || 1) * Math.sqrt(disc));
			roots = [
				{ re: q / c2, im: 0 },
				{ re: q !== 0 ? c0 / q : 0, im: 0 }
			];
		} else {
			const re = -c1 / (2 * c2);
			const im = Math.sqrt(-disc) / (2 * Math.abs(c2));
			roots = [
				{ re, im },
				{ re, im: -im }
			];
		}
		return sortRoots([...zerosAtOrigin, ...roots]);
	}
	const rev = a.slice().reverse();
	const z = initialGuesses(a);
	const done = new Array(n).fill(false);
	for (let it = 0; it < maxIter; it++) {
		tick();
		let active = 0;
		for (let i = 0; i < n; i++) {
			if (done[i]) continue;
			active++;
			const zi = z[i];
			const w = newtonCorrection(a, rev, zi.re, zi.im);
			// Aberth term: sum_{j != i} 1 / (z_i - z_j)
			let sr = 0;
			let si = 0;
			for (let j = 0; j < n; j++) {
				if (j === i) continue;
				const dr = zi.re - z[j].re;
				const di = zi.im - z[j].im;
				const d2 = dr * dr + di * di;
				if (d2 === 0) continue;
				sr += dr / d2;
				si += -di / d2;
			}
			// correction = w / (1 - w * s)
			const tr = 1 - (w.re * sr - w.im * si);
			const ti = -(w.re * si + w.im * sr);
			const t2 = tr * tr + ti * ti;
			let cr = w.re;
			let ci = w.im;
			if (t2 !== 0) {
				cr = (w.re * tr + w.im * ti) / t2;
				ci = (w.im * tr - w.re * ti) / t2;
			}
			zi.re -= cr;
			zi.im -= ci;
			const mag2 = zi.re * zi.re + zi.im * zi.im;
			if (cr * cr + ci * ci <= 16 * U * U * mag2 || (cr === 0 && ci === 0) || w.small) done[i] = true;
		}
		if (active === 0) break;
	}
	return sortRoots([...zerosAtOrigin, ...z.map((v) => ({ re: v.re, im: v.im }))]);
}

function sortRoots(r: C[]): C[] {
	return r.sort((p, q) => p.re - q.re || p.im - q.im);
}

export interface Disk {
	c: C;
	r: number;
}

/**
 * Rigorous inclusion disks for the roots of the EXACT polynomial p with |p_k - a_k| <= err_k, given
 * distinct approximations z_i. Smith's theorem (B. T. Smith, "Error bounds for zeros of a polynomial based
 * upon Gerschgorin's theorems", J. ACM 17 (1970) 661-674): all zeros lie in the union of the disks
 * |z - z_i| <= n |W_i|, W_i = p(z_i) / (p_n prod_{j != i} (z_i - z_j)), and a connected component made of m
 * disks holds exactly m zeros. We bound |p(z_i)| from above (computed value + Horner rounding bound
 * gamma_(4n) sum |a_k||z|^k (Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., section 5.1,
 * doubled for complex arithmetic) + coefficient uncertainty sum err_k |z|^k) and the denominator from below.
 * All magnitudes are combined in log2 to avoid overflow; the remaining floating error of this bookkeeping is
 * far below the 1e-6 relative safety factor applied to the radius. Returns null when the bound cannot be
 * formed (coincident approximations, uncertain leading coefficient).
 */
export function inclusionDisks(a: readonly number[], err: readonly number[], z: readonly C[]): Disk[] | null {
	const n = a.length - 1;
	if (z.length !== n || n < 1) return null;
	const lc = Math.abs(a[n]) - err[n];
	if (!(lc > 0)) return null;
	const gamma = (8 * n + 8) * U;
	const disks: Disk[] = [];
	const rev = a.slice().reverse();
	for (let i = 0; i < n; i++) {
		const zr = z[i].re;
		const zi = z[i].im;
		const mag = Math.hypot(zr, zi);
		let logP: number;
		if (mag <= 1) {
			const [pr, pi] = hornerC(a, zr, zi);
			let s = 0;
			let se = 0;
			let pw = 1;
			for (let k = 0; k <= n; k++) {
				s += Math.abs(a[k]) * pw;
				se += err[k] * pw;
				pw *= mag;
			}
			logP = Math.log2(Math.hypot(pr, pi) + gamma * s * (1 + gamma) + se * (1 + gamma));
		} else {
			// p(z) = z^n r(1/z), r = reversed a
			const m2 = zr * zr + zi * zi;
			const yr = zr / m2;
			const yi = -zi / m2;
			const [rr, ri] = hornerC(rev, yr, yi);
			const ym = 1 / mag;
			let s = 0;
			let se = 0;
			let pw = 1;
			for (let k = n; k >= 0; k--) {
				s += Math.abs(a[k]) * pw;
				se += err[k] * pw;
				pw *= ym;
			}
			logP = n * Math.log2(mag) + Math.log2(Math.hypot(rr, ri) + gamma * s * (1 + gamma) + se * (1 + gamma));
		}
		let logDen = Math.log2(lc);
		for (let j = 0; j < n; j++) {
			if (j === i) continue;
			const dr = zr - z[j].re;
			const di = zi - z[j].im;
			const d2 = dr * dr + di * di;
			if (d2 === 0) return null;
			logDen += 0.5 * Math.log2(d2);
		}
		const r = n * 2 ** (logP - logDen) * (1 + 1e-6) + 4 * U * mag;
		if (!Number.isFinite(r)) return null;
		disks.push({ c: { re: zr, im: zi }, r });
	}
	return disks;
}

/** Does any inclusion disk meet the closed half-line [0, inf) of the real axis? */
export function disksMeetNonnegativeReals(disks: readonly Disk[]): boolean {
	for (const d of disks) {
		if (Math.abs(d.c.im) > d.r) continue;
		const halfChord = Math.sqrt(Math.max(0, d.r * d.r - d.c.im * d.c.im));
		if (d.c.re + halfChord * (1 + 1e-12) >= 0) return true;
	}
	return false;
}

/** Evaluate a real polynomial (ascending) at real x, Horner. */
export function hornerR(a: readonly number[], x: number): number {
	let s = 0;
	for (let k = a.length - 1; k >= 0; k--) s = s * x + a[k];
	return s;
}

export function derivR(a: readonly number[]): number[] {
	const d: number[] = [];
	for (let i = 1; i < a.length; i++) d.push(a[i] * i);
	return d;
}

export function mulR(a: readonly number[], b: readonly number[]): number[] {
	if (!a.length || !b.length) return [];
	const c = new Array(a.length + b.length - 1).fill(0);
	for (let i = 0; i < a.length; i++) for (let j = 0; j < b.length; j++) c[i + j] += a[i] * b[j];
	return c;
}

export function subR(a: readonly number[], b: readonly number[]): number[] {
	const n = Math.max(a.length, b.length);
	const c: number[] = [];
	for (let i = 0; i < n; i++) c.push((a[i] ?? 0) - (b[i] ?? 0));
	return c;
}

/** Positive real roots (approximately real) of a real polynomial, polished by Newton's method. */
export function positiveRealRoots(a: readonly number[], relImTol = 1e-7): number[] {
	const t = a.slice();
	while (t.length && t[t.length - 1] === 0) t.pop();
	if (t.length <= 1) return [];
	const rs = polyRoots(t);
	const d = derivR(t);
	const out: number[] = [];
	for (const r of rs) {
		if (r.re <= 0) continue;
		if (Math.abs(r.im) > relImTol * Math.max(1, Math.abs(r.re)) && Math.abs(r.im) > 1e-9 * Math.abs(r.re))
			continue;
		let x = r.re;
		for (let k = 0; k < 40; k++) {
			const dv = hornerR(d, x);
			if (dv === 0) break;
			const nx = x - hornerR(t, x) / dv;
			if (!(nx > 0) || !Number.isFinite(nx)) break;
			const done = Math.abs(nx - x) <= 1e-15 * x;
			x = nx;
			if (done) break;
		}
		out.push(x);
	}
	return out.sort((p, q) => p - q);
}

/**
 * Minimum of the rational function u(x)/v(x) on [0, inf), v > 0 there, from its stationary points (roots of
 * u'v - uv'), x = 0 and the limit at infinity. A numerical report, never a verdict. Polynomials ascending.
 */
export function minRatioOnHalfLine(
	u: readonly number[],
	v: readonly number[]
): { value: number; x: number | null; atInfinity: boolean } {
	const ut = trimR(u);
	const vt = trimR(v);
	const f = (x: number) => hornerR(ut, x) / hornerR(vt, x);
	let best = f(0);
	let bx: number | null = 0;
	let atInf = false;
	const num = subR(mulR(derivR(ut), vt), mulR(ut, derivR(vt)));
	for (const x of positiveRealRoots(num)) {
		const val = f(x);
		if (Number.isFinite(val) && val < best) {
			best = val;
			bx = x;
		}
	}
	// limit at infinity
	const du = ut.length - 1;
	const dv = vt.length - 1;
	let lim: number;
	if (du < dv) lim = 0;
	else if (du === dv) lim = ut[du] / vt[dv];
	else lim = Math.sign(ut[du] / vt[dv]) * Infinity;
	if (lim < best) {
		best = lim;
		bx = null;
		atInf = true;
	}
	return { value: best, x: bx, atInfinity: atInf };
}

export function trimR(a: readonly number[]): number[] {
	const t = a.slice();
	while (t.length && t[t.length - 1] === 0) t.pop();
	return t;
}

/**
 * Minimum of u(x)/v(x) on [0, inf) (v > 0 there) from candidate points refined by Newton's method on the
 * stationary condition h = u'v - uv' = 0. Candidates: x = 0, a coarse logarithmic sweep, and the given
 * points (near-axis roots of the polynomials involved: resonances and near-crossings), which is where
 * narrow dips live. A numerical report, never a verdict; cheaper than `minRatioOnHalfLine`.
 */
export function minRatioFromCandidates(
	u: readonly number[],
	v: readonly number[],
	cands: readonly number[],
	range: [number, number] = [1e-6, 1e6]
): { value: number; x: number | null; atInfinity: boolean } {
	const ut = trimR(u);
	const vt = trimR(v);
	const f = (x: number) => hornerR(ut, x) / hornerR(vt, x);
	const du = derivR(ut);
	const dv = derivR(vt);
	const ddu = derivR(du);
	const ddv = derivR(dv);
	const h = (x: number) => hornerR(du, x) * hornerR(vt, x) - hornerR(ut, x) * hornerR(dv, x);
	const dh = (x: number) => hornerR(ddu, x) * hornerR(vt, x) - hornerR(ut, x) * hornerR(ddv, x);
	let best = f(0);
	let bx: number | null = 0;
	const pts: number[] = [];
	const [lo, hi] = range;
	const N = 48;
	const sweep: { x: number; f: number }[] = [];
	for (let i = 0; i <= N; i++) {
		const x = lo * (hi / lo) ** (i / N);
		sweep.push({ x, f: f(x) });
	}
	for (let i = 0; i <= N; i++) {
		const l = i > 0 ? sweep[i - 1].f : Infinity;
		const r = i < N ? sweep[i + 1].f : Infinity;
		if (sweep[i].f <= l && sweep[i].f <= r) pts.push(sweep[i].x);
	}
	for (const c of cands) if (c > 0 && Number.isFinite(c)) pts.push(c);
	// Refine only the most promising starting points (lowest values), which is where the minimum is.
	const start = pts
		.map((x) => ({ x, f: f(x) }))
		.filter((p) => Number.isFinite(p.f))
		.sort((a, b) => a.f - b.f)
		.slice(0, 6);
	for (const { x: x0 } of start) {
		let x = x0;
		let fx = f(x);
		for (let k = 0; k < 20; k++) {
			const d = dh(x);
			if (d === 0 || !Number.isFinite(d)) break;
			let nx = x - h(x) / d;
			if (!(nx > 0) || !Number.isFinite(nx)) nx = x / 2;
			if (nx > 4 * x) nx = 4 * x;
			if (nx < x / 4) nx = x / 4;
			const fn = f(nx);
			if (!(fn <= fx) && k > 0) break;
			const done = Math.abs(nx - x) <= 1e-15 * x;
			x = nx;
			fx = fn;
			if (done) break;
		}
		if (Number.isFinite(fx) && fx < best) {
			best = fx;
			bx = x;
		}
	}
	const dU = ut.length - 1;
	const dV = vt.length - 1;
	const lim = dU < dV ? 0 : dU === dV ? ut[dU] / vt[dV] : Math.sign(ut[dU] / vt[dV]) * Infinity;
	if (lim < best) return { value: lim, x: null, atInfinity: true };
	return { value: best, x: bx, atInfinity: false };
}

/** x = w^2 locations of the resonances of roots s = q (near-axis roots give dips): x = Re(-q^2) when > 0. */
export function resonanceX(roots: readonly C[]): number[] {
	const out: number[] = [];
	for (const q of roots) {
		if (q.im <= 0) continue;
		const x = q.im * q.im - q.re * q.re;
		if (x > 0) out.push(x, q.im * q.im);
	}
	return out;
}
