// Engine benchmark: the exact circle check vs a 10,000-point gridded check of the same question, on plants
// of order 2, 5, 10, 20, 30, 40, 60 that carry one lightly damped mode (damping ratio 1e-3) whose dip
// crosses the half-plane boundary of the sector [0, k2] over a band far narrower than the grid step, and on
// three modal state-space models of order 24 and 40 (tests/unit/stability/reference/modal-models.json).
// The right answers come from independent references: for the zpk rows a direct double-precision
// evaluation of G(jw) from its factors on 400,000 points packed into the resonance band (plus a wide sweep);
// for the modal rows python3-mpmath at 40 digits (reference/modal_models.py).
import { readFileSync } from 'node:fs';
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
	name: string;
	order: number;
	cold: number;
	warm: number;
	grid: number;
	certRight: boolean;
	gridRight: boolean;
	passWarm: number;
	passRight: boolean;
	/** Cold times of circle, max-sector and Popov on this model (ms). */
	checksCold: number;
	maxSectorRelErr: number | null;
	bracketWidth: number;
}

/** Prints the table; see engineSection for the one-line summary used by npm run bench. */
export async function benchEngine(): Promise<void> {
	await measure();
}

const modalRef = JSON.parse(
	readFileSync(new URL('../../tests/unit/stability/reference/modal-models.json', import.meta.url), 'utf8')
);

async function measure(): Promise<Row[]> {
	const { toTransferFunction } = await import('../../src/lib/stability/index');
	const out: Row[] = [];
	const rows: string[][] = [];
	// A different mode frequency per order, so each row is its own test of the grid (not one coin flip).
	const modes: Record<number, number> = {
		2: 1.37,
		5: 2.113,
		10: 0.8311,
		20: 3.7077,
		30: 1.1291,
		40: 0.913,
		60: 1.713
	};
	const cases: { name: string; order: number; model: () => Model; kStar: number; precise: boolean }[] = [];
	for (const n of [2, 5, 10, 20, 30, 40, 60]) {
		const wn = modes[n];
		const { model, factors } = plantOfOrder(n, wn);
		const gain = (model as { gain: number }).gain;
		const kStar = -1 / referenceMinReG(factors, gain, wn);
		const tf = toTransferFunction(model);
		cases.push({
			name: `zpk ${n}`,
			order: n,
			model: () => ({ kind: 'tf', num: tf.num, den: tf.den }),
			kStar,
			precise: false
		});
	}
	for (const name of ['modal40', 'repeated24', 'cluster40']) {
		const e = modalRef.models[name];
		const order = e.model.A.length;
		cases.push({
			name,
			order,
			model: () => structuredClone(e.model) as Model,
			kStar: Number(e.limit),
			precise: true
		});
	}
	for (const c of cases) {
		const tfModel = c.model();
		const tf = toTransferFunction(tfModel);
		// Just inside the light mode's dip: the loop must FAIL the sector [0, 1.001 k*].
		const k2 = c.kStar * 1.001;
		// Cold, the first time: a new model object (validation, exact conversion, scaling, the frequency
		// condition's minimum) and then max-sector and Popov on it (the <= 1 s per check target).
		const coldModel = c.model();
		let t0 = performance.now();
		const certVerdict = runCheck(coldModel, { type: 'circle', sector: [0, k2] }).verdict;
		const firstCold = performance.now() - t0;
		t0 = performance.now();
		const ms = runCheck(coldModel, { type: 'max-sector', lower: 0 });
		const msCold = performance.now() - t0;
		t0 = performance.now();
		runCheck(coldModel, { type: 'popov', sector: [0, c.kStar * 0.63] });
		const popovCold = performance.now() - t0;
		const reps = c.order >= 40 ? 20 : 200;
		const cold = Math.max(
			firstCold,
			timeIt(() => runCheck(c.model(), { type: 'circle', sector: [0, k2] }), Math.min(reps, 20))
		);
		// Warm: the same model object (its exact polynomials and the minimum of its frequency condition
		// cached), a different k2 in every run, so no verdict can be reused.
		let i = 0;
		runCheck(tfModel, { type: 'circle', sector: [0, k2] });
		const warm = timeIt(
			() => runCheck(tfModel, { type: 'circle', sector: [0, k2 * (1 + 1e-6 * (i++ % 1000))] }),
			reps
		);
		// The matching case just outside the dip (right answer: pass), which needs the full positivity proof.
		let j = 0;
		const passVerdict = runCheck(tfModel, { type: 'circle', sector: [0, c.kStar * 0.99] }).verdict;
		const passWarm = timeIt(
			() => runCheck(tfModel, { type: 'circle', sector: [0, c.kStar * 0.99 * (1 - 1e-6 * (j++ % 1000))] }),
			Math.min(reps, 50)
		);
		const gridVerdict = gridCheck(tf.num, tf.den, k2, 1e-3, 1e3) ? 'pass' : 'fail';
		const grid = timeIt(() => gridCheck(tf.num, tf.den, k2, 1e-3, 1e3), 100);
		const t = Number(ms.threshold);
		const hi = Number(ms.numbers.thresholdFailAbove);
		const relErr = c.precise ? Math.max(Math.abs(t / c.kStar - 1), Math.abs(hi / c.kStar - 1)) : null;
		const row: Row = {
			name: c.name,
			order: c.order,
			cold,
			warm,
			grid,
			certRight: certVerdict === 'fail',
			gridRight: gridVerdict === 'fail',
			passWarm,
			passRight: passVerdict === 'pass',
			checksCold: Math.max(firstCold, msCold, popovCold),
			maxSectorRelErr: relErr,
			bracketWidth: hi / t - 1
		};
		out.push(row);
		rows.push([
			c.name,
			String(c.order),
			cold.toFixed(3),
			warm.toFixed(4),
			grid.toFixed(3),
			(grid / warm).toFixed(1) + 'x',
			`${certVerdict} (${row.certRight ? 'right' : 'WRONG'})`,
			`${gridVerdict} (${row.gridRight ? 'right' : 'WRONG'})`,
			passWarm.toFixed(3),
			`${passVerdict} (${row.passRight ? 'right' : 'WRONG'})`,
			`${firstCold.toFixed(0)}/${msCold.toFixed(0)}/${popovCold.toFixed(0)}`,
			row.bracketWidth.toExponential(1),
			relErr === null ? '-' : relErr.toExponential(1)
		]);
	}
	const head = [
		'model',
		'order',
		'fail ms cold',
		'fail ms warm',
		'grid 10k ms',
		'grid/warm',
		'exact verdict',
		'grid verdict',
		'pass ms warm',
		'pass verdict',
		'first circle/max-sector/popov ms',
		'max-sector bracket',
		'vs mpmath'
	];
	const widths = head.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
	const line = (r: string[]) => r.map((c, i) => c.padEnd(widths[i])).join('  ');
	console.log('Engine: circle check, sector [0, 1.001 k*] (right answer: fail) and [0, 0.99 k*] (pass)');
	console.log(line(head));
	for (const r of rows) console.log(line(r));
	console.log(
		'medians after warm-up; cold = new model object each run; warm = same model object, a new k2 each run; first = the first check on a new model.'
	);
	return out;
}

/** Section for scripts/bench.ts: the table, then the order-30 figure against the target. */
export async function engineSection() {
	const rows = await measure();
	const r30 = rows.find((r) => r.name === 'zpk 30')!;
	const ratio = r30.grid / r30.warm;
	const right = rows.filter((r) => r.certRight && r.passRight).length;
	const gridRight = rows.filter((r) => r.gridRight).length;
	const o40 = rows.filter((r) => r.order === 40);
	// Every check on an order-40 model, cold (model conversion included): the first checks and the cold median.
	const worst40 = Math.max(...o40.map((r) => Math.max(r.checksCold, r.cold)));
	const worstBracket = Math.max(...rows.map((r) => r.bracketWidth));
	return {
		name: 'exact circle check, order 30',
		figure: `${r30.warm.toFixed(4)} ms median warm (grid ${r30.grid.toFixed(3)} ms, ${ratio.toFixed(1)}x; cold ${r30.cold.toFixed(3)} ms); right answers: exact ${right}/${rows.length}, grid ${gridRight}/${rows.length}; slowest check on an order-40 model ${worst40.toFixed(0)} ms; widest max-sector bracket ${worstBracket.toExponential(1)}`,
		target:
			'order 30 <= 0.1 ms warm and >= 10x faster than a 10,000-point grid; every order-40 check <= 1 s; brackets <= 1e-9; exact verdicts',
		ok: r30.warm <= 0.1 && ratio >= 10 && right === rows.length && worst40 <= 1000 && worstBracket <= 1e-9,
		details: Object.fromEntries(
			rows.flatMap((r) => [
				[`${r.name.replace(' ', '')}WarmMs`, Number(r.warm.toFixed(4))],
				[`${r.name.replace(' ', '')}GridMs`, Number(r.grid.toFixed(4))]
			])
		) as Record<string, number | string>
	};
}
