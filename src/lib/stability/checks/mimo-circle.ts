// Multivariable circle criterion (H. K. Khalil, Nonlinear Systems, 3rd ed., section 7.1, the multivariable
// circle criterion, Theorem 7.1 as recalled from memory; M. Vidyasagar, Nonlinear Systems Analysis, 2nd ed.,
// the multivariable circle criterion of chapter 6): for a square plant x' = A x + B u, y = C x (p inputs and
// outputs) in feedback u = -psi(t, y) with psi in the sector [K1, K2], K = K2 - K1 symmetric positive
// definite, the origin is globally exponentially stable when G [I + K1 G]^-1 is Hurwitz and
// Z(s) = [I + K2 G(s)] [I + K1 G(s)]^-1 is strictly positive real.
//
// Decided exactly, with D = 0 (a feedthrough is refused in this version):
// - Hurwitz: G [I + K1 G]^-1 = C (sI - Acl)^-1 B with Acl = A - B K1 C (exact in dyadics), so its poles are
//   eigenvalues of Acl; chi(s) = det(sI - Acl) (Berkowitz, exact) Hurwitz is sufficient, decided by the
//   existing certified Hurwitz test.
// - Z = I + K Ncl / chi with Ncl(s) = C adj(sI - Acl) B, each entry det(sI - Acl + b_j c_i) - chi (matrix
//   determinant lemma, as for the scalar model); so Z = F / chi with F = chi I + K Ncl, a polynomial matrix.
// - SPR (Khalil, Lemma 6.1 in its matrix form, from memory): Z Hurwitz, Z(jw) + Z(jw)^* > 0 for every real w,
//   and Z(inf) + Z(inf)^T > 0, which holds here since Z(inf) = I (D = 0).
//   |chi(jw)|^2 (Z + Z^*) = H(w) with H_ij = F_ij(jw) chi(-jw) + chi(jw) F_ji(-jw), a Hermitian polynomial
//   matrix; by Sylvester's criterion H > 0 iff every leading principal minor m_k(w) > 0, and each m_k is an
//   even real polynomial in w (H(-w) is the conjugate of H(w)), i.e. a polynomial in x = w^2. Each m_k > 0
//   on [0, inf) is decided by the exact positivity test (certify.ts: floating filter, then Descartes /
//   Collins-Akritas isolation).
import {
	type DPoly,
	type Dyadic,
	addD,
	degree,
	dyadicOf,
	isZero,
	mulD,
	negD,
	reflectD,
	scaleD,
	subDyadic,
	trim
} from '../exact';
import { type EngineOptions, withBudget } from '../budget';
import { certifiedHurwitz, certifiedPositiveOnHalfLine } from '../certify';
import { charPolyOf } from '../model';
import { type CheckResult } from '../types';
import { budgetResult } from './circle-check';

export interface MatrixSector {
	K1: number[][];
	K2: number[][];
}

const dy = (x: number): Dyadic => dyadicOf(x);
const mulDy = (a: Dyadic, b: Dyadic): Dyadic => ({ m: a.m * b.m, e: a.e + b.e });
const addDy = (a: Dyadic, b: Dyadic): Dyadic => subDyadic(a, { m: -b.m, e: b.e });

/** Determinant of a small matrix of polynomials by cofactor expansion along the first row (p <= 4). */
function detPoly(M: DPoly[][]): DPoly {
	const n = M.length;
	if (n === 1) return M[0][0];
	let acc: DPoly = { c: [], e: 0 };
	for (let j = 0; j < n; j++) {
		if (isZero(M[0][j])) continue;
		const minor = M.slice(1).map((r) => r.filter((_, c) => c !== j));
		const t = mulD(M[0][j], detPoly(minor));
		acc = addD(acc, j % 2 ? negD(t) : t);
	}
	return acc;
}

/** An even polynomial m(s) at s = jw as a polynomial in x = w^2 (odd coefficients must vanish). */
function evenAtJw(m: DPoly): DPoly {
	const c: bigint[] = [];
	for (let i = 0; i < m.c.length; i++) {
		if (i % 2 === 1) {
			if (m.c[i] !== 0n) throw new Error('internal: a minor of the Hermitian part is not even in w');
			continue;
		}
		c.push((i / 2) % 2 ? -m.c[i] : m.c[i]);
	}
	return trim({ c, e: m.e });
}

export interface MimoCore {
	pass: boolean;
	failure?: 'hurwitz' | 'frequency' | 'undecided';
	/** Order of the leading principal minor that failed or stayed undecided. */
	minor?: number;
	witnessFrequency?: number | null;
	reason?: string;
	closedLoopMaxRealPart: number | null;
	decidedBy: string[];
}

/** The exact decision (see the head of this file). A, B, C as entered; D = 0. */
export function mimoCircleCore(A: number[][], B: number[][], C: number[][], sector: MatrixSector): MimoCore {
	const p = B[0].length;
	const K1 = sector.K1.map((r) => r.map(dy));
	const K = sector.K2.map((r, i) => r.map((v, j) => subDyadic(dy(v), dy(sector.K1[i][j]))));
	const Bd = B.map((r) => r.map(dy));
	const Cd = C.map((r) => r.map(dy));
	// B K1 C, exactly.
	const BK1: Dyadic[][] = Bd.map((r) =>
		Array.from({ length: p }, (_, j) => r.reduce((s, b, l) => addDy(s, mulDy(b, K1[l][j])), { m: 0n, e: 0 }))
	);
	const Acl: Dyadic[][] = A.map((r, i) =>
		r.map((a, j) => {
			let s: Dyadic = { m: 0n, e: 0 };
			for (let l = 0; l < p; l++) s = addDy(s, mulDy(BK1[i][l], Cd[l][j]));
			return subDyadic(dy(a), s);
		})
	);
	const chi = charPolyOf(Acl);
	const hw = certifiedHurwitz(chi);
	const base = { closedLoopMaxRealPart: hw.maxRealPart, decidedBy: [`Hurwitz: ${hw.path}`] };
	if (hw.undecided)
		return {
			pass: false,
			failure: 'undecided',
			reason: 'the Hurwitz test of the closed loop with K1 did not finish',
			...base
		};
	if (!hw.hurwitz) return { pass: false, failure: 'hurwitz', ...base };
	// Ncl_ij = det(sI - Acl + b_j c_i) - chi.
	const Ncl: DPoly[][] = [];
	for (let i = 0; i < p; i++) {
		const row: DPoly[] = [];
		for (let j = 0; j < p; j++) {
			const M = Acl.map((r, a) => r.map((v, b) => subDyadic(v, mulDy(Bd[a][j], Cd[i][b]))));
			row.push(addD(charPolyOf(M), negD(chi)));
		}
		Ncl.push(row);
	}
	// F = chi I + K Ncl.
	const F: DPoly[][] = [];
	for (let i = 0; i < p; i++) {
		const row: DPoly[] = [];
		for (let j = 0; j < p; j++) {
			let s: DPoly = i === j ? chi : { c: [], e: 0 };
			for (let l = 0; l < p; l++)
				if (K[i][l].m !== 0n && !isZero(Ncl[l][j])) s = addD(s, scaleD(Ncl[l][j], K[i][l]));
			row.push(s);
		}
		F.push(row);
	}
	const chiR = reflectD(chi);
	const H: DPoly[][] = F.map((row, i) =>
		row.map((f, j) => addD(mulD(f, chiR), mulD(chi, reflectD(F[j][i]))))
	);
	for (let k = 1; k <= p; k++) {
		const mk = evenAtJw(detPoly(H.slice(0, k).map((r) => r.slice(0, k))));
		const pos = certifiedPositiveOnHalfLine(mk);
		base.decidedBy.push(`minor ${k}: ${pos.path}`);
		if (pos.undecided) return { pass: false, failure: 'undecided', minor: k, reason: pos.reason, ...base };
		if (!pos.positive) {
			const x = pos.witness ?? (pos.rootInterval ? (pos.rootInterval[0] + pos.rootInterval[1]) / 2 : null);
			return {
				pass: false,
				failure: 'frequency',
				minor: k,
				witnessFrequency: x === null ? null : Math.sqrt(x),
				...base
			};
		}
		if (degree(mk) < 0)
			return { pass: false, failure: 'frequency', minor: k, witnessFrequency: null, ...base };
	}
	return { pass: true, ...base };
}

const MIMO_ASSUMPTIONS =
	'Holds for every nonlinearity, time-varying or not, in the matrix sector [K1, K2] (K2 - K1 symmetric positive definite); the linear model, without feedthrough, is taken as exact; sufficient, not necessary.';

export function runMimoCircle(
	A: number[][],
	B: number[][],
	C: number[][],
	sector: MatrixSector,
	opts: EngineOptions = {}
): CheckResult {
	return withBudget(
		opts.budgetSeconds,
		() => mimoResult(mimoCircleCore(A, B, C, sector), B[0].length),
		(e) => budgetResult('circle', e.message, MIMO_ASSUMPTIONS, { inputs: B[0].length })
	);
}

function mimoResult(core: MimoCore, p: number): CheckResult {
	const numbers: Record<string, number | string | null> = {
		inputs: p,
		closedLoopHurwitz: core.failure === 'hurwitz' ? 'no' : core.decidedBy.length > 1 ? 'yes' : null,
		closedLoopMaxRealPart: core.closedLoopMaxRealPart,
		failedMinor: core.minor ?? null,
		witnessFrequency: core.witnessFrequency ?? null,
		decidedBy: core.decidedBy.join('; ')
	};
	let reason: string | undefined;
	if (core.failure === 'hurwitz')
		reason =
			'The loop closed with the gain matrix K1 is not Hurwitz (A - B K1 C has an eigenvalue with non-negative real part), so the criterion proves nothing.';
	else if (core.failure === 'frequency')
		reason = `Z(jw) + Z(jw)* is not positive definite at every frequency: its leading principal minor of order ${core.minor} is not positive${core.witnessFrequency !== null && core.witnessFrequency !== undefined ? ` (at about ${Number(core.witnessFrequency.toPrecision(6))} rad/s)` : ''} (exact).`;
	else if (core.failure === 'undecided') reason = `Undecided: ${core.reason ?? 'work limit reached'}.`;
	const verdict = core.pass ? 'pass' : core.failure === 'undecided' ? 'inconclusive' : 'fail';
	return {
		type: 'circle',
		verdict,
		criticalFrequency: core.witnessFrequency ?? null,
		margin: null,
		numbers,
		explanation: core.pass
			? `Absolutely stable for every nonlinearity in the matrix sector [K1, K2] (${p} inputs and outputs): Z = [I + K2 G][I + K1 G]^-1 is strictly positive real, proved exactly.`
			: `Not proved for the matrix sector [K1, K2]: ${reason}`,
		...(reason ? { reason } : {}),
		...(core.failure === 'hurwitz'
			? {
					notApplicable: {
						precondition: 'the loop closed with K1 is Hurwitz',
						remedy: 'A lower sector matrix K1 that stabilises the plant makes the criterion applicable.'
					}
				}
			: {}),
		assumptions: MIMO_ASSUMPTIONS
	};
}
