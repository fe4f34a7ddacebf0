import { describe, expect, it } from 'vitest';
import { checkConsistency } from '../../../src/lib/requirements/consistency';

const circle = (k1: number, k2: number | null) => ({
	check: { type: 'circle' as const, sector: [k1, k2] as [number, number] }
});

describe('statement numbers vs the specification', () => {
	it('an interval that equals the sector is consistent', () => {
		const c = checkConsistency(
			'The loop shall remain stable for every gain in [0.5, 1.8].',
			circle(0.5, 1.8)
		);
		expect(c.status).toBe('consistent');
		expect(c.matched).toHaveLength(1);
	});

	it('an interval that differs from the sector is a mismatch with its span', () => {
		const s = 'The loop shall remain stable for every gain in [0.5, 2.0].';
		const c = checkConsistency(s, circle(0.5, 1.8));
		expect(c.status).toBe('mismatch');
		expect(s.slice(...c.findings[0].span!)).toBe('[0.5, 2.0]');
		expect(c.findings[0].message).toMatch(/\[0\.5, 1\.8\]/);
	});

	it('±6 dB agrees with [0.501, 1.995] and with [0.501, 1.996], not with [0.5, 1.8]', () => {
		const s = 'The loop shall remain stable for ±6 dB of gain uncertainty.';
		expect(checkConsistency(s, circle(0.501, 1.995)).status).toBe('consistent');
		expect(checkConsistency(s, circle(0.501, 1.996)).status).toBe('consistent');
		expect(checkConsistency(s, circle(0.5, 1.8)).status).toBe('mismatch');
		expect(checkConsistency(s, circle(0.398, 2.512)).status).toBe('mismatch');
	});

	it('-50 %/+80 % agrees with [0.5, 1.8] only', () => {
		const s = 'The loop shall remain stable for actuator gains within −50 %/+80 % of nominal.';
		expect(checkConsistency(s, circle(0.5, 1.8)).status).toBe('consistent');
		expect(checkConsistency(s, circle(0.5, 2)).status).toBe('mismatch');
	});

	it('a percentage alone is the required margin', () => {
		const s = 'The certified sector shall exceed [0.5, 1.8] by 20 %.';
		expect(checkConsistency(s, { ...circle(0.5, 1.8), requiredMargin: 0.2 }).status).toBe('consistent');
		expect(checkConsistency(s, { ...circle(0.5, 1.8), requiredMargin: 0.1 }).status).toBe('mismatch');
		expect(checkConsistency(s, circle(0.5, 1.8)).status).toBe('mismatch');
	});

	it('margins: dB and degrees against the minimum gain and phase margins', () => {
		const s = 'The loop shall have at least 6 dB of gain margin with at least 45° of phase margin.';
		const m = (gm?: number, pm?: number) => ({
			check: { type: 'margins' as const, minGainMarginDb: gm, minPhaseMarginDeg: pm }
		});
		expect(checkConsistency(s, m(6, 45)).status).toBe('consistent');
		const off = checkConsistency(s, m(6, 30));
		expect(off.status).toBe('mismatch');
		expect(off.findings[0].message).toMatch(/30°/);
		expect(checkConsistency(s, m(8, 45)).status).toBe('mismatch');
		expect(checkConsistency('The loop shall be stable for gains in [0, 1].', m(6, 45)).status).toBe(
			'mismatch'
		);
	});

	it('an infinite upper bound is matched by ∞ in the text', () => {
		expect(
			checkConsistency('The loop shall remain stable for every gain in [0, ∞).', circle(0, null)).status
		).toBe('consistent');
	});

	it('a statement without the numbers is "unstated"; no specification is "no-spec"', () => {
		expect(checkConsistency('The loop shall remain absolutely stable.', circle(0, 1)).status).toBe(
			'unstated'
		);
		expect(checkConsistency('The loop shall remain absolutely stable.', null).status).toBe('no-spec');
	});

	it('a sector with a bound not typed yet is not compared (no "[∞, ∞]" hint while the form is empty)', () => {
		for (const sector of [
			[NaN, NaN],
			[0.4, NaN]
		])
			expect(
				checkConsistency('The loop shall remain absolutely stable in [0.4, 1.8].', {
					check: { type: 'circle', sector } as never,
					requiredMargin: null
				})
			).toEqual({ status: 'no-spec', findings: [], matched: [] });
	});
});
