import { describe, expect, it } from 'vitest';
import { combine } from '../../../src/lib/server/evidence/state';

// The combined state rule as documented in src/lib/server/evidence/state.ts and issue 5: test verifies a
// requirement only through accepted evidence; a failing analysis makes it failing whatever the tests say.
const none = { accepted: 0, pending: 0, rejected: 0 };
const accepted = { accepted: 1, pending: 0, rejected: 0 };
const pending = { accepted: 0, pending: 1, rejected: 0 };
const rejected = { accepted: 0, pending: 0, rejected: 2 };

describe('combined verification state', () => {
	it.each([
		['verified', accepted, 'verified-analysis-and-test'],
		['verified', none, 'verified-analysis-only'],
		['verified', pending, 'verified-analysis-only'],
		['verified', rejected, 'verified-analysis-only'],
		['not-analysed', accepted, 'verified-test-only'],
		['pending', accepted, 'verified-test-only'],
		['failing', accepted, 'failing'],
		['failing', none, 'failing'],
		['not-analysed', pending, 'pending'],
		['pending', none, 'pending'],
		['inconclusive', none, 'pending'],
		['error', rejected, 'pending'],
		['not-analysed', none, 'not-covered'],
		['not-analysed', rejected, 'not-covered']
	] as const)('analysis %s with evidence %o is %s', (analysis, evidence, expected) => {
		expect(combine(analysis, evidence)).toBe(expected);
	});
});
