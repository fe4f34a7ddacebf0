// Engine benchmark: certified circle check vs a 10,000-point gridded check of the same question, on plants
// of order 2, 5, 10, 20, 30 that carry one lightly damped mode (damping ratio 1e-3) whose dip crosses the
// half-plane boundary of the sector [0, k2] over a band far narrower than the grid step.
// The right answer is taken from an independent reference: a direct double-precision evaluation of G(jw)
// from its factors on 400,000 points packed into the resonance band (plus a wide sweep).
import { runCheck, type Model } from '../../src/lib/stability/index';

type Root = [number, number];

function plantOfOrder(n: number, wn: number): { model: Model; factors: Root[] } {
	const zeta = 1e-3;
	const poles: Root[] = [
		[-zeta * wn, wn * Math.sqrt(1 - zeta * zeta)],
		[-zeta * wn, -wn * Math.sqrt(1 - zeta * zeta)]
	];
	// Well-damped factors spread over two decades above the mode (so its dip stays the deepest point of
	// Re G), which makes the coefficients span many orders of magnitude.
	let i = 0;
	while (poles.length < n) {
		const w = wn * 10 ** (0.7 + (2 * i) / Math.max(1, n - 2));
		if (n - poles.length >= 2 && i % 2 === 0) {
			const z = 0.5;
			poles.push([-z * w, w * Math.sqrt(1 - z * z)], [-z * w, -w * Math.sqrt(1 - z * z)]);
		} else poles.push([-w * 3, 0]);
		i++;
	}
	const gain = poles.reduce((m, p) => m * Math.hypot(p[0], p[1]), 1);
	const zpk: Model = { kind: 'zpk', zeros: [], poles, gain };
	return { model: zpk, factors: poles };
}

/** Re G(jw) from the factors directly (independent of the engine's polynomial code). */
function reG(factors: Root[], gain: number, w: number): number {
	let re = gain;
	let im = 0;
	for (const [a, b] of factors) {
		// divide by (jw - (a + jb)) = (-a) + j (w - b)
		const dr = -a;
		const di = w - b;
		const d = dr * dr + di * di;
		const nr = (re * dr + im * di) / d;
		const ni = (im * dr - re * di) / d;
		re = nr;
		im = ni;
	}
	return re;
}

function referenceMinReG(factors: Root[], gain: number, wn: number): number {
	let m = Infinity;
	for (let i = 0; i <= 20000; i++) m = Math.min(m, reG(factors, gain, 1e-4 * 1e8 ** (i / 20000)));
	for (let i = 0; i <= 400000; i++)
		m = Math.min(m, reG(factors, gain, wn * (1 - 0.02 + (0.04 * i) / 400000)));
	return m;
}

/** The gridded check a sampled tool would do: 10,000 log-spaced points, Horner on the coefficients. */
function gridCheck(num: number[], den: number[], k2: number, wLo: number, wHi: number): boolean {
	const N = 10000;
	const r = Math.pow(wHi / wLo, 1 / (N - 1));
	let w = wLo;
	const bound = -1 / k2;
	let min = Infinity;
	// Every point is evaluated (a sampled tool draws and reports the whole curve), no early exit.
	for (let i = 0; i < N; i++) {
		let nr = 0;
		let ni = 0;
		for (let k = 0; k < num.length; k++) {
			const t = -ni * w + num[k];
			ni = nr * w;
			nr = t;
		}
		let dr = 0;
		let di = 0;
		for (let k = 0; k < den.length; k++) {
			const t = -di * w + den[k];
			di = dr * w;
			dr = t;
		}
		const re = (nr * dr + ni * di) / (dr * dr + di * di);
		if (re < min) min = re;
		w *= r;
	}
	return min > bound;
}

function median(xs: number[]): number {
	const s = xs.slice().sort((a, b) => a - b);
	return s[Math.floor(s.length / 2)];
}

function timeIt(f: () => unknown, reps: number): number {
	for (let i = 0; i < Math.min(20, reps); i++) f();
	const ts: number[] = [];
	for (let i = 0; i < reps; i++) {
		const t = performance.now();
		f();
		ts.push(performance.now() - t);
	}
	return median(ts);
}

interface Row {
	order: number;
	cold: number;
	warm: number;
	grid: number;
	certRight: boolean;
	gridRight: boolean;
}

/** Prints the table; see engineSection for the one-line summary used by npm run bench. */
export async function benchEngine(): Promise<void> {
	await measure();
}

async function measure(): Promise<Row[]> {
	const out: Row[] = [];
	const rows: string[][] = [];
	// A different mode frequency per order, so each row is its own test of the grid (not one coin flip).
	const modes: Record<number, number> = { 2: 1.37, 5: 2.113, 10: 0.8311, 20: 3.7077, 30: 1.1291 };
	for (const n of [2, 5, 10, 20, 30]) {
		const wn = modes[n];
		const { model, factors } = plantOfOrder(n, wn);
		const gain = (model as { gain: number }).gain;
		const kStar = -1 / referenceMinReG(factors, gain, wn);
		// Just inside the light mode's dip: the loop must FAIL the sector [0, 1.001 k*].
		const k2 = kStar * 1.001;
		const { toTransferFunction } = await import('../../src/lib/stability/index');
		const tf = toTransferFunction(model);
		const tfModel: Model = { kind: 'tf', num: tf.num, den: tf.den };
		const check = { type: 'circle' as const, sector: [0, k2] as [number, number] };
		const certVerdict = runCheck(tfModel, check).verdict;
		// Cold: a new model object each time (validation, exact conversion, scaling included).
		const cold = timeIt(() => runCheck({ kind: 'tf', num: tf.num, den: tf.den }, check), 200);
		// Warm: the same model object (its exact polynomials cached), i.e. the check alone.
		const warm = timeIt(() => runCheck(tfModel, check), 200);
		// The matching case just outside the dip (right answer: pass), which needs the full positivity proof.
		const passCheck = { type: 'circle' as const, sector: [0, kStar * 0.99] as [number, number] };
		const passVerdict = runCheck(tfModel, passCheck).verdict;
		const passMs = timeIt(() => runCheck({ kind: 'tf', num: tf.num, den: tf.den }, passCheck), 200);
		const gridVerdict = gridCheck(tf.num, tf.den, k2, 1e-3, 1e3) ? 'pass' : 'fail';
		const grid = timeIt(() => gridCheck(tf.num, tf.den, k2, 1e-3, 1e3), 100);
		out.push({
			order: n,
			cold,
			warm,
			grid,
			certRight: certVerdict === 'fail',
			gridRight: gridVerdict === 'fail'
		});
		rows.push([
			String(n),
			cold.toFixed(3),
			warm.toFixed(3),
			grid.toFixed(3),
			(grid / cold).toFixed(1) + 'x',
			`${certVerdict} (${certVerdict === 'fail' ? 'right' : 'WRONG'})`,
			`${gridVerdict} (${gridVerdict === 'fail' ? 'right' : 'WRONG'})`,
			passMs.toFixed(3),
			`${passVerdict} (${passVerdict === 'pass' ? 'right' : 'WRONG'})`
		]);
	}
	const head = [
		'order',
		'certified ms (cold)',
		'certified ms (warm)',
		'grid 10k ms',
		'grid/cold',
		'certified verdict',
		'grid verdict'
	];
	const widths = head.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
	const line = (r: string[]) => r.map((c, i) => c.padEnd(widths[i])).join('  ');
	console.log(
		'Engine: circle check, sector [0, 1.001 k*] on a plant with a damping-1e-3 mode (right answer: fail)'
	);
	console.log(line(head));
	for (const r of rows) console.log(line(r));
	console.log(
		'medians of 200 (certified) / 100 (grid) runs after warm-up; cold = new model object each run.'
	);
	return out;
}

/** Section for scripts/bench.ts: the table, then the order-30 figure against the target. */
export async function engineSection() {
	const rows = await measure();
	const r30 = rows.find((r) => r.order === 30)!;
	const ratio = r30.grid / r30.cold;
	const certRight = rows.filter((r) => r.certRight).length;
	const gridRight = rows.filter((r) => r.gridRight).length;
	return {
		name: 'certified circle check, order 30',
		figure: `${r30.cold.toFixed(3)} ms median (grid ${r30.grid.toFixed(3)} ms, ${ratio.toFixed(1)}x); right answers: certified ${certRight}/5, grid ${gridRight}/5`,
		target: 'order 30 <= 1 ms and >= 10x faster than a 10,000-point grid, exact verdict',
		ok: r30.cold <= 1 && ratio >= 10 && certRight === rows.length,
		details: Object.fromEntries(
			rows.flatMap((r) => [
				[`o${r.order}CertMs`, Number(r.cold.toFixed(4))],
				[`o${r.order}GridMs`, Number(r.grid.toFixed(4))]
			])
		) as Record<string, number | string>
	};
}
