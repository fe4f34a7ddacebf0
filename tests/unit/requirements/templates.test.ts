import { describe, expect, it } from 'vitest';
import { checkConsistency } from '../../../src/lib/requirements/consistency';
import { qualityHints } from '../../../src/lib/requirements/quality';
import {
	SPEC_TEMPLATES,
	dbOfGain,
	phaseMarginOfSector,
	sectorOfDb,
	sectorOfPercent,
	templateById
} from '../../../src/lib/requirements/templates';

// Independent computations (not the module's formulas): the decibel as 20·log10 of an amplitude
// ratio, evaluated through natural logarithms; the phase margin of the sector [1/k, k] found by
// intersecting the circle-criterion disk (diameter [-k, -1/k], Khalil Thm 7.1) with the unit circle
// by bisection, then compared with DOMAIN.md §9's arccos((1 + 1) / (k + 1/k)) and its quoted values.

const ratioOfDb = (db: number) => Math.exp((db / 20) * Math.log(10));
const dbOfRatio = (k: number) => (20 * Math.log(k)) / Math.log(10);

/** Angle from -1 (degrees) where the unit circle leaves the disk with diameter [-k, -1/k]. */
function diskPhaseMargin(k: number): number {
	const c = -(k + 1 / k) / 2;
	const r = (k - 1 / k) / 2;
	const inside = (phi: number) => Math.hypot(-Math.cos(phi) - c, Math.sin(phi)) <= r;
	let lo = 0; // -1 itself is inside the disk
	let hi = Math.PI / 2; // +j is outside
	for (let i = 0; i < 200; i++) {
		const mid = (lo + hi) / 2;
		if (inside(mid)) lo = mid;
		else hi = mid;
	}
	return (lo * 180) / Math.PI;
}

describe('sector and margin arithmetic (DOMAIN.md §9)', () => {
	it('±6 dB -> [0.501, 1.996]: bounds cover the uncertainty, within 0.001 of 10^(∓6/20)', () => {
		const [k1, k2] = sectorOfDb(6);
		expect(k1).toBe(0.501);
		expect(k2).toBe(1.996);
		expect(k1).toBeLessThanOrEqual(ratioOfDb(-6));
		expect(k2).toBeGreaterThanOrEqual(ratioOfDb(6));
		expect(ratioOfDb(-6) - k1).toBeLessThan(0.001);
		expect(k2 - ratioOfDb(6)).toBeLessThan(0.001);
		// The often-quoted 1.995 is within 0.001 too, but falls short of +6 dB.
		expect(dbOfRatio(1.995)).toBeLessThan(6);
		expect(dbOfRatio(k2)).toBeGreaterThanOrEqual(6);
	});

	it('±8 dB -> [0.398, 2.512]', () => {
		const [k1, k2] = sectorOfDb(8);
		expect([k1, k2]).toEqual([0.398, 2.512]);
		expect(k1).toBeLessThanOrEqual(ratioOfDb(-8));
		expect(k2).toBeGreaterThanOrEqual(ratioOfDb(8));
	});

	it('dbOfGain agrees with the natural-log form', () => {
		for (const k of [0.1, 0.5, 1, 1.8, 2, 10, 316.2]) expect(dbOfGain(k)).toBeCloseTo(dbOfRatio(k), 12);
	});

	it('phase margin of [1/k, k]: the disk/unit-circle intersection equals arccos(2/(k + 1/k))', () => {
		for (const db of [1, 3, 6, 8, 12, 20]) {
			const k = ratioOfDb(db);
			expect(phaseMarginOfSector(k)).toBeCloseTo(diskPhaseMargin(k), 6);
		}
		// DOMAIN.md §9 quotes ±8 dB ~ 46.6°, which the formula gives. Its "±6 dB ~ 36.9°" is the value
		// for k = 2 (6.02 dB, cos φ = 0.8); exactly 6 dB gives 36.76°.
		expect(phaseMarginOfSector(ratioOfDb(8))).toBeCloseTo(46.6, 1);
		expect(phaseMarginOfSector(ratioOfDb(6))).toBeCloseTo(36.76, 2);
		expect(phaseMarginOfSector(2)).toBeCloseTo(36.87, 2);
		expect(diskPhaseMargin(2)).toBeCloseTo((Math.acos(0.8) * 180) / Math.PI, 6);
	});

	it('-50 %/+80 % of nominal -> [0.5, 1.8] (DOMAIN.md §5)', () => {
		expect(sectorOfPercent(50, 80)).toEqual([0.5, 1.8]);
		expect(sectorOfPercent(-50, 80)).toEqual([0.5, 1.8]);
	});
});

describe('specification templates', () => {
	it('offers the DOMAIN.md §5/§9 templates with the right checks', () => {
		expect(templateById('gain-6db')!.check).toEqual({ type: 'circle', sector: [0.501, 1.996] });
		expect(templateById('gain-8db')!.check).toEqual({ type: 'circle', sector: [0.398, 2.512] });
		expect(templateById('saturation-circle')!.check).toEqual({ type: 'circle', sector: [0, 1] });
		expect(templateById('saturation-popov')!.check).toEqual({ type: 'popov', sector: [0, 1] });
		expect(templateById('gain-50-80')!.check).toEqual({ type: 'circle', sector: [0.5, 1.8] });
		expect(templateById('margins-6-45')!.check).toEqual({
			type: 'margins',
			minGainMarginDb: 6,
			minPhaseMarginDeg: 45
		});
		expect(templateById('passive')!.check).toEqual({ type: 'positive-real' });
		expect(new Set(SPEC_TEMPLATES.map((t) => t.id)).size).toBe(SPEC_TEMPLATES.length);
	});

	it('each suggested statement is consistent with its check and free of wording hints', () => {
		for (const t of SPEC_TEMPLATES) {
			const c = checkConsistency(t.statement, { check: t.check });
			expect(c.status, `${t.id}: ${JSON.stringify(c.findings)}`).toBe('consistent');
			expect(qualityHints(t.statement), t.id).toEqual([]);
		}
	});
});
