// Discrete-time checks (issue 17): median time of the discrete circle check, its largest sector and the
// Tsypkin check at orders 4, 10 and 20, side by side with a 10,000-point grid evaluation of the same
// condition over theta in [0, pi] in the same run. Each plant has one lightly damped pole pair (radius
// 0.9995) whose peak the grid may step over; the verdict of the exact check and of the grid are both shown
// against the engine's largest proved sector (the grid's own estimate of that limit is shown beside it).
import { runCheck, toTransferFunction, type Model } from '../../src/lib/stability/index';

function mul(a: number[], b: number[]): number[] {
	const c = new Array(a.length + b.length - 1).fill(0);
	for (let i = 0; i < a.length; i++) for (let j = 0; j < b.length; j++) c[i + j] += a[i] * b[j];
	return c;
}

/** A Schur-stable plant of order n in z, descending coefficients: one light pair and well-damped poles. */
function plant(n: number, theta0: number): Model {
	let den = [1, -2 * 0.9995 * Math.cos(theta0), 0.9995 ** 2];
	let i = 0;
	while (den.length - 1 < n) {
		if (n - (den.length - 1) >= 2) {
			const r = 0.3 + 0.4 * ((i * 0.37) % 1);
			const th = 0.4 + 2.5 * ((i * 0.61) % 1);
			den = mul(den, [1, -2 * r * Math.cos(th), r * r]);
		} else den = mul(den, [1, -0.2]);
		i++;
	}
	return { kind: 'tf', num: [0.001, 0.0005], den, sampleTime: 0.01 };
}

function evalAt(p: number[], th: number): { re: number; im: number } {
	let re = 0;
	let im = 0;
	const c = Math.cos(th);
	const s = Math.sin(th);
	for (const a of p) [re, im] = [re * c - im * s + a, re * s + im * c];
	return { re, im };
}

/** The gridded evaluation: min over 10,000 angles of Re[(1 + q (1 - e^-j theta)) G] (q = 0: Re G). */
function gridMin(num: number[], den: number[], q = 0): number {
	let m = Infinity;
	for (let i = 0; i < 10000; i++) {
		const th = (Math.PI * i) / 9999;
		const n = evalAt(num, th);
		const d = evalAt(den, th);
		const dd = d.re * d.re + d.im * d.im;
		const gr = (n.re * d.re + n.im * d.im) / dd;
		const gi = (n.im * d.re - n.re * d.im) / dd;
		const v = (1 + q * (1 - Math.cos(th))) * gr - q * Math.sin(th) * gi;
		if (v < m) m = v;
	}
	return m;
}

function median(xs: number[]): number {
	const s = xs.slice().sort((a, b) => a - b);
	return s[Math.floor(s.length / 2)];
}

function timeIt(f: () => unknown, reps: number): number {
	const ts: number[] = [];
	for (let i = 0; i < reps; i++) {
		const t = performance.now();
		f();
		ts.push(performance.now() - t);
	}
	return median(ts);
}

export async function discreteSection() {
	const details: Record<string, number | string> = {};
	const lines: string[] = [];
	let allRight = true;
	let worst = 0;
	const thetas: Record<number, number> = { 4: 0.7003, 10: 1.2917, 20: 0.4411 };
	for (const n of [4, 10, 20]) {
		const make = () => plant(n, thetas[n]);
		const tf = toTransferFunction(make());
		const ms = runCheck(make(), { type: 'max-sector', lower: 0 });
		const kProved = Number(ms.threshold);
		const kGrid = -1 / gridMin(tf.num, tf.den);
		// Just above the proved limit: a correct check fails, a grid that stepped over the peak passes.
		const k2 = Number(ms.numbers.upperBoundProved) * 1.001;
		const reps = n >= 20 ? 7 : 15;
		// A new model object every run (no cached polynomials).
		const tCircle = timeIt(() => runCheck(make(), { type: 'circle', sector: [0, k2] }), reps);
		const verdict = runCheck(make(), { type: 'circle', sector: [0, k2] }).verdict;
		const tMax = timeIt(() => runCheck(make(), { type: 'max-sector', lower: 0 }), reps);
		const tsy = runCheck(make(), { type: 'tsypkin', sector: [0, kProved * 0.9] });
		const tTsy = timeIt(() => runCheck(make(), { type: 'tsypkin', sector: [0, kProved * 0.9] }), reps);
		const q = typeof tsy.q === 'number' ? tsy.q : 0;
		const tGrid = timeIt(() => gridMin(tf.num, tf.den), reps);
		const tGridTsy = timeIt(() => gridMin(tf.num, tf.den, q), reps);
		const gridVerdict = 1 + k2 * gridMin(tf.num, tf.den) > 0 ? 'pass' : 'fail';
		const right = verdict === 'fail';
		allRight &&= right;
		worst = Math.max(worst, tCircle, tMax, tTsy);
		lines.push(
			`order ${String(n).padStart(2)}: circle ${tCircle.toFixed(1)} ms (${verdict}), max-sector ${tMax.toFixed(1)} ms (proved ${kProved.toPrecision(6)}, grid says ${kGrid.toPrecision(6)}), tsypkin ${tTsy.toFixed(1)} ms (${tsy.verdict}, q = ${q.toPrecision(3)}) | 10,000-point grid: circle condition ${tGrid.toFixed(1)} ms (${gridVerdict} at k2 = ${k2.toPrecision(6)}), Tsypkin condition ${tGridTsy.toFixed(1)} ms`
		);
		details[`order${n}CircleMs`] = Number(tCircle.toFixed(2));
		details[`order${n}MaxSectorMs`] = Number(tMax.toFixed(2));
		details[`order${n}TsypkinMs`] = Number(tTsy.toFixed(2));
		details[`order${n}GridMs`] = Number(tGrid.toFixed(2));
		details[`order${n}GridVerdict`] = gridVerdict;
	}
	for (const l of lines) console.log('     ' + l);
	return {
		name: 'discrete checks vs a 10,000-point grid (orders 4, 10, 20)',
		figure: `slowest median ${worst.toFixed(1)} ms; exact verdicts ${allRight ? 'all right' : 'NOT all right'}`,
		target: 'every exact verdict right, each check under 1 s',
		ok: allRight && worst < 1000,
		details
	};
}
