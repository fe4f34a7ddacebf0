import { describe, expect, it } from 'vitest';
import { approvalBlockers, earsShape, qualityHints } from '../../../src/lib/requirements/quality';

// Example statements are written in the style of the examples of the NASA Systems Engineering
// Handbook (NASA/SP-2016-6105 Rev 2, Appendix C) and the INCOSE Guide to Writing Requirements; the
// wording of those texts is recalled from memory, not quoted. EARS shapes follow Mavin et al., RE'09.

const rules = (s: string) => qualityHints(s).map((h) => h.rule);
const spanned = (s: string, rule: string) =>
	qualityHints(s)
		.filter((h) => h.rule === rule)
		.map((h) => s.slice(h.span![0], h.span![1]));

const GOOD =
	'The elevon loop shall remain absolutely stable for every actuator gain in [0.5, 1.8] times nominal.';

describe('quality hints (DOMAIN.md §7)', () => {
	it('a well-formed statement gets no hint', () => {
		expect(qualityHints(GOOD)).toEqual([]);
		expect(qualityHints('The pitch loop shall have at least 6 dB of gain margin.')).toEqual([]);
	});

	it('exactly one "shall" (NASA App. C; INCOSE R2/R3)', () => {
		expect(rules('The actuator responds to commands.')).toContain('one-shall');
		const two = 'The system shall log faults and the system shall report faults.';
		expect(rules(two)).toContain('one-shall');
		expect(qualityHints(two).find((h) => h.rule === 'one-shall')!.message).toMatch(/2 "shall"s/);
	});

	it('"will", "should" and "must" are flagged (NASA App. C: shall = requirement, will = fact, should = goal)', () => {
		expect(spanned('The controller will limit the rate.', 'shall-not-will')).toEqual(['will']);
		expect(spanned('The controller should limit the rate to 10 deg/s.', 'shall-not-will')).toEqual([
			'should'
		]);
		expect(spanned('The loop must be stable.', 'shall-not-will')).toEqual(['must']);
	});

	it('vague words (INCOSE R7), with their spans', () => {
		const s = 'The damper shall provide adequate damping with sufficient margin and a fast response.';
		expect(spanned(s, 'vague')).toEqual(['adequate', 'sufficient', 'fast']);
		expect(spanned('The loop shall be robust to approximately 10 % gain error.', 'vague')).toEqual([
			'robust',
			'approximately'
		]);
	});

	it('"any gain in [k1, k2]" is fine with numeric bounds, flagged with symbolic ones', () => {
		expect(rules('The loop shall remain stable for any gain in [0.5, 1.8].')).toEqual([]);
		const symbolic = 'The loop shall remain stable for any gain in [k1, k2].';
		expect(rules(symbolic)).toEqual(expect.arrayContaining(['vague', 'range-symbolic']));
		expect(spanned(symbolic, 'range-symbolic')).toEqual(['[k1, k2]']);
		expect(rules('The loop shall remain stable for any gain.')).toContain('vague');
	});

	it('escape clauses (INCOSE R8)', () => {
		expect(spanned('The loop shall remain stable as far as possible.', 'escape-clause')).toEqual([
			'as far as possible'
		]);
		expect(spanned('The filter shall be retuned if necessary.', 'escape-clause')).toEqual(['if necessary']);
		expect(spanned('The gains shall be scheduled as appropriate.', 'escape-clause')).toEqual([
			'as appropriate'
		]);
	});

	it('open endings (INCOSE R9)', () => {
		expect(
			spanned('The monitor shall detect stuck, runaway, oscillatory failures etc.', 'open-ending')
		).toEqual(['etc.']);
		expect(
			spanned('The log shall hold events including but not limited to saturation.', 'open-ending')
		).toEqual(['including but not limited to']);
		const andOr = 'The loop shall tolerate saturation and/or dead-zone.';
		expect(spanned(andOr, 'open-ending')).toEqual(['and/or']);
		// "and/or" is one finding, not also a combinator.
		expect(rules(andOr)).not.toContain('several-thoughts');
	});

	it('superfluous infinitives (INCOSE R10)', () => {
		expect(spanned('The actuator shall be able to hold 200 N·m.', 'superfluous-infinitive')).toEqual([
			'be able to'
		]);
		expect(spanned('The governor shall be capable of tracking 50 rpm/s.', 'superfluous-infinitive')).toEqual([
			'be capable of'
		]);
	});

	it('several thoughts: and, or, unless (INCOSE R18/R19); "between a and b" is one range', () => {
		expect(spanned('The damper shall engage and the pilot shall be alerted.', 'several-thoughts')).toEqual([
			'and'
		]);
		expect(spanned('The loop shall be stable unless the actuator saturates.', 'several-thoughts')).toEqual([
			'unless'
		]);
		expect(rules('The loop shall remain stable for gains between 0.5 and 1.8 times nominal.')).not.toContain(
			'several-thoughts'
		);
	});

	it('negatives (INCOSE R16)', () => {
		expect(spanned('The loop shall not oscillate.', 'negative')).toEqual(['not']);
		expect(spanned('The actuator shall never exceed 30 deg.', 'negative')).toEqual(['never']);
	});

	it('pronouns (INCOSE R24)', () => {
		expect(spanned('The yaw damper shall stay engaged while it is powered.', 'pronoun')).toEqual(['it']);
		expect(spanned('They shall be verified by test.', 'pronoun')).toEqual(['They']);
	});

	it('purpose phrases belong in the rationale (INCOSE R20)', () => {
		expect(
			spanned('The loop shall have 45 deg of phase margin in order to tolerate delay.', 'purpose-phrase')
		).toEqual(['in order to']);
		expect(
			spanned('The gain shall be limited to 2 so that the actuator stays linear.', 'purpose-phrase')
		).toEqual(['so that']);
	});

	it('numbers without unit or range (INCOSE R33/R34); identifiers and units are not flagged', () => {
		expect(spanned('The loop gain shall stay below 2.5.', 'number-unit')).toEqual(['2.5']);
		expect(rules('The loop shall settle within 2 s at 20 C.')).not.toContain('number-unit');
		expect(rules('The loop shall keep ±6 dB of gain margin.')).not.toContain('number-unit');
		expect(rules('The actuator gain shall stay within −50 %/+80 % of nominal.')).not.toContain('number-unit');
		expect(rules('The loop of VX7-003 shall meet ARP4754A.')).not.toContain('number-unit');
		// A small whole number naming an item is not a measure; one asked for as a quantity is.
		expect(rules('The rotor 1 speed loop shall remain stable at 60 kn.')).not.toContain('number-unit');
		expect(spanned('The loop gain shall be limited to 2 at every operating point.', 'number-unit')).toEqual([
			'2'
		]);
		expect(spanned('The loop shall keep 3 of its poles in the left half-plane.', 'number-unit')).toEqual([
			'3'
		]);
	});

	it('TBD / TBR / TBS are blockers of approval; the rest are hints', () => {
		const s = 'The loop shall remain stable for gains up to TBD, with a delay of TBR ms.';
		const blockers = approvalBlockers(s);
		expect(blockers.map((b) => s.slice(b.span![0], b.span![1]))).toEqual(['TBD', 'TBR']);
		expect(blockers.every((b) => b.severity === 'blocker')).toBe(true);
		expect(approvalBlockers('The bound shall be TBS.')).toHaveLength(1);
		expect(qualityHints('The loop should be fast.').every((h) => h.severity === 'hint')).toBe(true);
	});

	it('spans point into the statement and hints come in reading order', () => {
		const s = 'It should be fast etc.';
		const hs = qualityHints(s);
		const starts = hs.filter((h) => h.span).map((h) => h.span![0]);
		expect(starts).toEqual([...starts].sort((a, b) => a - b));
		for (const h of hs) if (h.span) expect(h.span[1]).toBeGreaterThan(h.span[0]);
	});

	it('EARS shapes (Mavin et al., RE\'09) and the "If ... then" form', () => {
		expect(earsShape(GOOD)).toBe('ubiquitous');
		expect(earsShape('While hovering, the wing-tilt loop shall remain stable.')).toBe('state');
		expect(earsShape('When the tilt command changes, the loop shall settle within 2 s.')).toBe('event');
		expect(earsShape('Where a yaw damper is fitted, the damper loop shall remain stable.')).toBe('feature');
		expect(earsShape('If the actuator saturates, then the loop shall remain stable.')).toBe('unwanted');
		expect(rules('If the actuator saturates the loop shall remain stable.')).toContain('ears-if-then');
		expect(earsShape('Stable loop.')).toBe('none');
	});

	it('empty text gives no hint', () => {
		expect(qualityHints('')).toEqual([]);
		expect(qualityHints('   ')).toEqual([]);
	});
});
