import { describe, expect, it } from 'vitest';
import {
	inForbiddenRegion,
	leftOfPopovLine,
	nyquistPicture,
	popovPicture,
	type StoredRun
} from '../../../src/lib/components/plots/verdict-picture';
import { computeRun } from '../../../src/lib/server/analyses/compute';
import { provedNumbers } from '../../../src/lib/server/trace/service';
import { DEMO_MODELS, DEMO_REQUIREMENTS } from '../../../src/lib/server/demo/scenario';
import { sectorGeometry } from '../../../src/lib/stability/index';

// The picture of a verdict, from the stored run only: the region the verdict was tested against (the
// stated sector widened by the required margin), the stated one beside it, and G(jw) at the engine's
// critical frequency, which must lie in the tested region exactly when the verdict fails.
//
// The situation of issue 12: an analyst publishes an elevon-actuator version that fails VX7-016 (the
// demo's "Elevon loop circle criterion", sector [0.4, 1.8] with a 20 % margin, so tested on [0.4, 2.16])
// while the stated sector alone would pass. The version below is invented for the test (the demo's
// hover point with a motor constant three times that of version 2).

const mul = (a: number[], b: number[]) => {
	const r = new Array(a.length + b.length - 1).fill(0);
	a.forEach((x, i) => b.forEach((y, j) => (r[i + j] += x * y)));
	return r;
};
const lags = (...p: number[]) => p.map((x) => [1, x]).reduce(mul, [1]);
const elevon = DEMO_MODELS.find((m) => m.key === 'elevon')!;
const FAILING_ELEVON = {
	note: 'High-torque motor option: motor constant tripled.',
	operatingPoints: [
		{ label: 'hover, 20 C', model: { kind: 'tf' as const, num: [216], den: lags(1.2, 4, 10) } },
		elevon.versions[2].operatingPoints[1]
	]
};
const VX7_016 = DEMO_REQUIREMENTS.find((r) => r.title === 'Elevon loop circle criterion')!.spec!;

const run = (spec: { check: unknown; requiredMargin?: number }, content: unknown): StoredRun => {
	const out = computeRun({
		check: spec.check,
		requiredMargin: spec.requiredMargin ?? null,
		operatingPoints: null,
		content: content as never
	});
	// What the API hands the browser: the stored JSON.
	return JSON.parse(
		JSON.stringify({
			verdict: out.verdict,
			worstPoint: out.worstPoint,
			result: out.result,
			curves: out.curves
		})
	);
};

describe('the Nyquist picture of a circle-criterion verdict', () => {
	it('VX7-016 on the failing elevon version: tested disk [0.4, 2.16] with the marker inside it, stated disk beside it', () => {
		const r = run(VX7_016, FAILING_ELEVON);
		expect(r.verdict).toBe('fail');
		const pic = nyquistPicture(r);
		expect(pic.regions.map((g) => [g.role, g.sector])).toEqual([
			['tested', [0.4, 1.8 * 1.2]],
			['stated', [0.4, 1.8]]
		]);
		expect(pic.regions[0].label).toBe('tested sector [0.4, 2.16] (stated [0.4, 1.8] with a 20 % margin)');
		expect(pic.regions[1].label).toBe('stated sector [0.4, 1.8]');
		// The tested disk's diameter is [-1/0.4, -1/2.16] = [-2.5, -0.462963] (Khalil, 3rd ed., Theorem 7.1).
		const g = pic.regions[0].geometry;
		expect(g.kind === 'disk' && g.diameter[0]).toBeCloseTo(-2.5, 12);
		expect(g.kind === 'disk' && g.diameter[1]).toBeCloseTo(-1 / 2.16, 12);

		// The worst point is highlighted and the marker sits at the engine's critical frequency, on it.
		expect(r.worstPoint).toBe('hover, 20 C');
		expect(pic.curves.filter((c) => c.highlight).map((c) => c.label)).toEqual(['hover, 20 C (worst)']);
		const m = pic.marker!;
		expect(m.w).toBe(r.result!.criticalFrequency);
		// Reference (mpmath, 30 digits, outside the project): Re Z(jw) with Z = (1 + 2.16 G)/(1 + 0.4 G),
		// G = 216/((s+1.2)(s+4)(s+10)), is smallest at w = 4.461755406 rad/s, where it is -0.1544869588 and
		// G = -0.5983093564 - 0.3868391973 j. For [0.4, 1.8] the same minimum is +0.08165810096 (pass).
		expect(m.w).toBeCloseTo(4.461755406, 6);
		expect(m.re).toBeCloseTo(-0.5983093564, 6);
		expect(m.im).toBeCloseTo(-0.3868391973, 6);
		expect(inForbiddenRegion(pic.regions[0].geometry, m.re, m.im)).toBe(true);
		expect(inForbiddenRegion(pic.regions[1].geometry, m.re, m.im)).toBe(false);
		expect(r.result!.margin).toBeCloseTo(-0.1544869588, 6);
		// One number: the text, the marker and the stored result carry the same critical frequency.
		expect(m.label).toBe('critical frequency ω = 4.46176 rad/s');
		// ... and the export's Numbers column (XLSX, CSV, JSON lines) writes the same.
		expect(provedNumbers(VX7_016.check, r.result, VX7_016.requiredMargin).text).toContain(
			'critical frequency 4.46176 rad/s'
		);
	});

	it('the stated sector alone passes on the same version (the picture no longer hides the failure)', () => {
		const r = run({ check: VX7_016.check }, FAILING_ELEVON);
		expect(r.verdict).toBe('pass');
		const pic = nyquistPicture(r);
		expect(pic.regions.map((g) => g.role)).toEqual(['tested']);
		expect(inForbiddenRegion(pic.regions[0].geometry, pic.marker!.re, pic.marker!.im)).toBe(false);
	});

	it('every demo circle requirement on every version of its model: marker in the tested region exactly when it fails', () => {
		const cases: { name: string; verdict: string; inside: boolean | null }[] = [];
		const circle = DEMO_REQUIREMENTS.filter((q) => q.spec?.check.type === 'circle');
		for (const q of circle) {
			const model = DEMO_MODELS.find((m) => m.key === q.spec!.model)!;
			const versions = q.spec!.model === 'elevon' ? [...model.versions, FAILING_ELEVON] : model.versions;
			for (const [i, v] of versions.entries()) {
				const r = run(q.spec!, v);
				const pic = nyquistPicture(r);
				const tested = pic.regions.find((g) => g.role === 'tested')!;
				const numbers = r.result!.numbers as Record<string, unknown>;
				// A verdict decided by the Hurwitz or encirclement part has no critical frequency and no
				// marker: the curve need not enter the region then.
				const frequencyDecided = r.verdict === 'pass' || numbers.witnessFrequency !== null;
				const inside = pic.marker ? inForbiddenRegion(tested.geometry, pic.marker.re, pic.marker.im) : null;
				cases.push({ name: `${q.title} v${i + 1}`, verdict: r.verdict!, inside });
				if (frequencyDecided) {
					expect(pic.marker, `${q.title} v${i + 1}`).not.toBeNull();
					expect(inside, `${q.title} v${i + 1}`).toBe(r.verdict === 'fail');
				} else expect(pic.marker).toBeNull();
			}
		}
		// Both outcomes occur, so the check above is not vacuous.
		expect(cases.some((c) => c.verdict === 'fail' && c.inside === true)).toBe(true);
		expect(cases.some((c) => c.verdict === 'pass' && c.inside === false)).toBe(true);
	});

	it('a run stored before the marker existed draws no marker rather than a guessed one', () => {
		const r = run(VX7_016, elevon.versions[0]);
		for (const p of r.curves!.points) delete p.critical;
		expect(nyquistPicture(r).marker).toBeNull();
	});
});

describe('the Popov picture', () => {
	const governor = DEMO_MODELS.find((m) => m.key === 'governor')!;
	const L6 = DEMO_REQUIREMENTS.find((r) => r.title === 'Governor Popov criterion')!.spec!;

	it('the demo governor passes [0, 2.5]: tested line, marker on its allowed side', () => {
		for (const v of governor.versions) {
			const r = run(L6, v);
			expect(r.verdict).toBe('pass');
			const pic = popovPicture(r)!;
			expect(pic.lines.map((l) => [l.role, l.k])).toEqual([['tested', 2.5]]);
			expect(leftOfPopovLine(pic.lines[0], pic.marker!.re, pic.marker!.im)).toBe(false);
		}
	});

	it('[0, 20] with a 20 % margin fails: the line of k = 24 and the stated k = 20 beside it, marker left of the tested line', () => {
		// Reference (Routh-Hurwitz by hand): 9/((s+0.5)(s+2)(s+6)) closed with gain k has the characteristic
		// polynomial s^3 + 8.5 s^2 + 16 s + 6 + 9k, stable only for 8.5 * 16 > 6 + 9k, k < 14.44; the
		// constant gain 24 lies in the sector, so no Popov multiplier can exist (Khalil, 3rd ed., Theorem 7.3).
		const r = run({ check: { type: 'popov', sector: [0, 20] }, requiredMargin: 0.2 }, governor.versions[0]);
		expect(r.verdict).toBe('fail');
		const pic = popovPicture(r)!;
		expect(pic.lines.map((l) => [l.role, l.k])).toEqual([
			['tested', 24],
			['stated', 20]
		]);
		expect(leftOfPopovLine(pic.lines[0], pic.marker!.re, pic.marker!.im)).toBe(true);
	});
});

describe('the region geometry', () => {
	it('disk, its outside and the half-plane (Khalil, 3rd ed., Theorem 7.1: disk on [-1/k1, -1/k2])', () => {
		const outside = sectorGeometry(0.5, 2); // disk on [-2, -0.5], the curve must stay outside
		expect(inForbiddenRegion(outside, -1, 0)).toBe(true);
		expect(inForbiddenRegion(outside, -1.25, 0.74)).toBe(true);
		expect(inForbiddenRegion(outside, -1.25, 0.76)).toBe(false);
		expect(inForbiddenRegion(outside, 0, 0)).toBe(false);
		const inside = sectorGeometry(-1, 1); // disk on [-1, 1], the curve must stay inside
		expect(inForbiddenRegion(inside, 0, 0)).toBe(false);
		expect(inForbiddenRegion(inside, 0, 1.01)).toBe(true);
		const half = sectorGeometry(0, 4); // Re G > -1/4
		expect(inForbiddenRegion(half, -0.26, 5)).toBe(true);
		expect(inForbiddenRegion(half, -0.24, -5)).toBe(false);
	});
});
