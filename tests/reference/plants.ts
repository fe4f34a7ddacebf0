// Generated plants for the exact reference run (deterministic: a fixed seed, no Math.random). Each plant
// carries "recipes" that tell the reference which circle-criterion sectors to build around its exact
// limits (exact_reference.py choose_sectors): { case: 'k1=0' | 'k1<0' | 'k1>0', f } asks for the sector
// [k1, k1 + f (L - k1)] with L the exact largest k2 for that k1 (f < 1 must pass, f > 1 must fail when Q is
// Hurwitz), 'inf' for [0, infinity], 'explicit' for a given sector. `proxy` uses the k1 = 0 limit instead of
// the limit at k1 (cheaper for order 40; the verdict is still computed exactly).
import type { Model } from '../../src/lib/stability/index';

export interface Recipe {
	case: 'k1=0' | 'k1<0' | 'k1>0' | 'inf' | 'explicit';
	f?: number;
	proxy?: boolean;
	sector?: [number, number | null];
}

export interface GeneratedPlant {
	id: string;
	family: string;
	model: Model;
	recipes: Recipe[];
	/** Rough cost, so the reference schedules the large models first. */
	weight: number;
}

/** mulberry32: a small, well-known 32-bit generator; the seed fixes every plant. */
function rng(seed: number) {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

type Root = [number, number];

/** Round to `d` significant digits, as a user types a coefficient (0.6, 5.08: not dyadic). */
const sig = (x: number, d: number) => Number(x.toPrecision(d));

function polyFromRoots(roots: Root[]): number[] {
	let p = [1];
	const mul = (a: number[], b: number[]) => {
		const c = new Array(a.length + b.length - 1).fill(0);
		for (let i = 0; i < a.length; i++) for (let j = 0; j < b.length; j++) c[i + j] += a[i] * b[j];
		return c;
	};
	for (const [re, im] of roots) {
		if (im === 0) p = mul(p, [1, -re]);
		else if (im > 0) p = mul(p, [1, -2 * re, re * re + im * im]);
	}
	return p;
}

const FULL: Recipe[] = [
	{ case: 'k1=0', f: 0.63 },
	{ case: 'k1=0', f: 1.6 },
	{ case: 'k1<0', f: 0.63 },
	{ case: 'k1<0', f: 1.6 },
	{ case: 'k1>0', f: 0.63 },
	{ case: 'k1>0', f: 1.6 },
	{ case: 'inf' }
];
const NEAR: Recipe[] = [
	{ case: 'k1=0', f: 0.999 },
	{ case: 'k1=0', f: 1.001 }
];
const ORDER40: Recipe[] = [
	{ case: 'k1=0', f: 0.63 },
	{ case: 'k1=0', f: 1.6 },
	{ case: 'k1<0', f: 0.63, proxy: true },
	{ case: 'k1>0', f: 0.63, proxy: true }
];

function fourFold(): Model {
	const poles: [number, number][] = [];
	for (let i = 0; i < 4; i++) poles.push([-0.02, 0.999799979995999], [-0.02, -0.999799979995999]);
	poles.push([-0.11078105537246409, 5.5048503444431915], [-0.11078105537246409, -5.5048503444431915]);
	const gain = poles.reduce((m, p) => m * Math.hypot(p[0], p[1]), 1);
	return { kind: 'zpk', zeros: [], poles, gain };
}

export function generatePlants(seed = 20261202): GeneratedPlant[] {
	const r = rng(seed);
	const uni = (lo: number, hi: number) => lo + (hi - lo) * r();
	const logu = (lo: number, hi: number) => 10 ** uni(Math.log10(lo), Math.log10(hi));
	const int = (lo: number, hi: number) => Math.floor(uni(lo, hi + 1));
	const sign = () => (r() < 0.5 ? -1 : 1);
	const out: GeneratedPlant[] = [];
	const push = (family: string, model: Model, order: number, recipes?: Recipe[]) =>
		out.push({
			id: `${family}-${out.filter((p) => p.family === family).length + 1}`,
			family,
			model,
			recipes: recipes ?? (order <= 10 ? [...FULL, ...NEAR] : FULL),
			weight: order * order
		});

	/** n poles: lightly to well damped pairs and real poles, magnitudes lo..hi; some right-half-plane. */
	const randomPoles = (n: number, lo: number, hi: number, unstable: boolean): Root[] => {
		const ps: Root[] = [];
		while (ps.length < n) {
			if (n - ps.length >= 2 && r() < 0.6) {
				const wn = logu(lo, hi);
				const z = logu(0.01, 0.9);
				ps.push([-z * wn, wn * Math.sqrt(1 - z * z)], [-z * wn, -wn * Math.sqrt(1 - z * z)]);
			} else ps.push([-logu(lo, hi), 0]);
		}
		if (unstable) {
			// One right-half-plane real pole in place of the last pole (both halves of a pair).
			const last = ps.pop()!;
			if (last[1] !== 0) {
				ps.pop();
				ps.push([-logu(lo, hi), 0]);
			}
			ps.push([logu(lo, hi), 0]);
		}
		return ps;
	};
	const randomZeros = (m: number): Root[] => {
		const zs: Root[] = [];
		while (zs.length < m) {
			if (m - zs.length >= 2 && r() < 0.4) {
				const wn = logu(0.1, 20);
				const z = uni(-0.3, 0.9);
				zs.push([-z * wn, wn * Math.sqrt(1 - z * z)], [-z * wn, -wn * Math.sqrt(1 - z * z)]);
			} else zs.push([sign() * logu(0.1, 20), 0]);
		}
		return zs;
	};

	// Transfer functions of low order as a user types them (4 significant digits), relative degree 0..n.
	for (let i = 0; i < 60; i++) {
		const n = int(1, 6);
		const den = polyFromRoots(randomPoles(n, 0.2, 10, r() < 0.2)).map((c) => sig(c, 4));
		const m = int(Math.max(0, n - 3), n);
		const num = polyFromRoots(randomZeros(m)).map((c) => sig(c * sign() * logu(0.2, 20), 4));
		push('tf', { kind: 'tf', num, den }, n);
	}

	// Zero-pole-gain models up to order 14 (lightly damped pairs down to damping 0.01), strictly proper or not.
	for (let i = 0; i < 60; i++) {
		const n = int(2, 14);
		const poles = randomPoles(n, 0.1, 100, r() < 0.15);
		const zeros = randomZeros(int(0, Math.min(n, 4)));
		const dc =
			poles.reduce((a, p) => a * Math.hypot(p[0], p[1]), 1) /
			zeros.reduce((a, z) => a * Math.hypot(z[0], z[1]), 1);
		push('zpk', { kind: 'zpk', zeros, poles, gain: sig(sign() * dc * logu(0.1, 10), 6) }, n);
	}

	// Dense state-space models of order 2..5 with decimal entries (stable or not), some with feedthrough.
	for (let i = 0; i < 25; i++) {
		const n = int(2, 5);
		const A = Array.from({ length: n }, (_, a) =>
			Array.from({ length: n }, (_, b) =>
				a === b ? sig(-uni(0.2, 3), 3) : r() < 0.4 ? 0 : sig(uni(-2, 2), 3)
			)
		);
		const B = Array.from({ length: n }, () => [sig(uni(-1, 1), 3)]);
		const C = [Array.from({ length: n }, () => sig(uni(-2, 2), 3))];
		const D = [[r() < 0.3 ? sig(uni(-1, 1), 2) : 0]];
		push('ss', { kind: 'ss', A, B, C, D }, n);
	}

	/** Block-diagonal (modal) model: 2x2 blocks [[s, w], [-w, s]] per mode, damping zmin..zmax. */
	const modal = (
		modes: number,
		wlo: number,
		whi: number,
		zmin: number,
		zmax: number,
		feed: number
	): Model => {
		const n = 2 * modes;
		const A = Array.from({ length: n }, () => new Array(n).fill(0));
		const B = Array.from({ length: n }, () => [0]);
		const C = [new Array(n).fill(0)];
		for (let k = 0; k < modes; k++) {
			const wn = wlo * (whi / wlo) ** (modes === 1 ? 0 : k / (modes - 1)) * uni(0.97, 1.03);
			const z = logu(zmin, zmax);
			const s = -z * wn;
			const w = wn * Math.sqrt(1 - z * z);
			A[2 * k][2 * k] = s;
			A[2 * k][2 * k + 1] = w;
			A[2 * k + 1][2 * k] = -w;
			A[2 * k + 1][2 * k + 1] = s;
			B[2 * k + 1][0] = uni(0.5, 1.5);
			// Mode shapes of either sign; C scaled with the mode frequency keeps every mode visible.
			C[0][2 * k] = uni(-1, 1) * wn * 0.2;
			C[0][2 * k + 1] = uni(0.05, 1);
		}
		return { kind: 'ss', A, B, C, D: [[feed]] };
	};
	for (let i = 0; i < 30; i++) {
		const modes = int(3, 8);
		push(
			'modal',
			modal(modes, logu(0.1, 2), logu(5, 100), 0.005, 0.2, r() < 0.3 ? sig(uni(0, 1), 2) : 0),
			2 * modes
		);
	}
	// Order 40: twenty lightly damped modes (damping 0.005..0.05) over two decades.
	for (let i = 0; i < 8; i++)
		push('modal40', modal(20, uni(0.3, 1), uni(30, 100), 0.005, 0.05, 0), 40, ORDER40);

	// Positive-real families with poles on the imaginary axis at integer frequencies (Foster forms
	// c0/s + sum c_i s/(s^2 + w_i^2) + d, Khalil 3rd ed. Definition 6.4): all residues positive (PR), one
	// negative (not PR), and first-order lead/lag pairs (s + a)/(s + b).
	for (let i = 0; i < 16; i++) {
		const kind = i % 4;
		if (kind === 3) {
			const a = sig(logu(0.1, 10), 3);
			const b = sig(logu(0.1, 10), 3);
			push('pr', { kind: 'tf', num: [1, a], den: [1, b] }, 1);
			continue;
		}
		// Build N/D = c0/s + sum_i c_i s/(s^2 + w_i^2) (+ a stable part k/(s + p) for kind 2) in doubles: the
		// coefficients are small integers and dyadic fractions, so the sums are exact.
		const terms: { num: number[]; den: number[] }[] = [];
		terms.push({ num: [int(1, 4) / 2], den: [1, 0] });
		const ws = [1, 2, 3, 4].slice(0, int(1, 2));
		ws.forEach((w, j) =>
			terms.push({ num: [(kind === 1 && j === 0 ? -1 : 1) * (int(1, 4) / 4), 0], den: [1, 0, w * w] })
		);
		if (kind === 2) terms.push({ num: [int(1, 3)], den: [1, int(1, 5)] });
		const add = (a: { num: number[]; den: number[] }, b: { num: number[]; den: number[] }) => {
			const mul = (x: number[], y: number[]) => {
				const c = new Array(x.length + y.length - 1).fill(0);
				for (let p = 0; p < x.length; p++) for (let q = 0; q < y.length; q++) c[p + q] += x[p] * y[q];
				return c;
			};
			const p1 = mul(a.num, b.den);
			const p2 = mul(b.num, a.den);
			const len = Math.max(p1.length, p2.length);
			const pad = (x: number[]) => [...new Array(len - x.length).fill(0), ...x];
			const s = pad(p1).map((v, k) => v + pad(p2)[k]);
			while (s.length > 1 && s[0] === 0) s.shift();
			return { num: s, den: mul(a.den, b.den) };
		};
		const g = terms.reduce(add);
		push('pr', { kind: 'tf', num: g.num, den: g.den }, g.den.length - 1);
	}

	// The cases of issue 11 and hidden modes (a state-space model whose unstable mode is uncontrollable or
	// unobservable; the same with a stable hidden mode).
	const fixed: [string, Model, Recipe[]][] = [
		[
			'ill-posed',
			{ kind: 'tf', num: [-1, 0], den: [1, 1] },
			[{ case: 'explicit', sector: [0, 1] }, { case: 'explicit', sector: [-1, 1] }, ...FULL]
		],
		['common-unstable-factor', { kind: 'tf', num: [1, -1], den: [1, 1, -2] }, FULL],
		[
			'zero-plant',
			{ kind: 'tf', num: [0], den: [1, 1] },
			[{ case: 'explicit', sector: [0, 5] }, { case: 'inf' }]
		],
		['one-rhp-pole', { kind: 'tf', num: [1], den: [1, -1] }, FULL],
		[
			'critical-frequency',
			{ kind: 'tf', num: [1], den: [1, 0.6, 5.08, 1.2, 4] },
			[{ case: 'explicit', sector: [0, 1.6] }, ...FULL, ...NEAR]
		],
		[
			'khalil-7.1',
			{
				kind: 'zpk',
				zeros: [],
				poles: [
					[-1, 0],
					[-2, 0],
					[-3, 0]
				],
				gain: 24
			},
			[...FULL, ...NEAR]
		],
		[
			'hidden-unstable-uncontrollable',
			{
				kind: 'ss',
				A: [
					[-1, 0],
					[0, 1]
				],
				B: [[1], [0]],
				C: [[1, 1]],
				D: [[0]]
			},
			FULL
		],
		[
			'hidden-unstable-unobservable',
			{
				kind: 'ss',
				A: [
					[-1, 0],
					[0, 1]
				],
				B: [[1], [1]],
				C: [[1, 0]],
				D: [[0]]
			},
			FULL
		],
		[
			'hidden-stable',
			{
				kind: 'ss',
				A: [
					[-1, 0],
					[0, -3]
				],
				B: [[1], [0]],
				C: [[1, 1]],
				D: [[0]]
			},
			FULL
		],
		['negative-feedthrough', { kind: 'tf', num: [-0.5, 1, 2], den: [1, 3, 2] }, FULL],
		// The 4-fold lightly damped mode of tests/unit/stability/property.test.ts (unit DC gain).
		['four-fold-mode', fourFold(), [...FULL, ...NEAR]]
	];
	for (const [name, model, recipes] of fixed)
		out.push({ id: `issue-${name}`, family: 'issue', model, recipes, weight: 4 });
	return out;
}
