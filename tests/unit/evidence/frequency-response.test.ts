import { describe, expect, it } from 'vitest';
import {
	MAX_PROBLEMS,
	ResponseParseError,
	parseFrequencyResponse
} from '../../../src/lib/server/evidence/frequency-response';

// Hand-made files for G(s) = 1/(s + 1). Values computed by hand, independently of the parser:
//   G(jw) = 1/(1 + jw) = (1 - jw)/(1 + w^2), |G| in dB = -10 log10(1 + w^2), phase = -atan(w).
//   w = 0.1 rad/s: G = 0.990099 - 0.0990099j, |G| = 0.995037 = -0.043214 dB, phase = -5.710593 deg
//   w = 1 rad/s:   G = 0.5 - 0.5j,            |G| = 0.707107 = -3.010300 dB, phase = -45 deg
//   w = 10 rad/s:  G = 0.00990099 - 0.0990099j, |G| = 0.0995037 = -20.043214 dB, phase = -84.289407 deg
// In Hz the same frequencies are w / (2 pi): 0.01591549, 0.15915494, 1.59154943.
const W = [0.1, 1, 10];
const EXPECTED = W.map((w) => ({ w, re: 1 / (1 + w * w), im: -w / (1 + w * w) }));

function expectPoints(got: { w: number; re: number; im: number }[], tol = 2e-6) {
	expect(got.length).toBe(EXPECTED.length);
	got.forEach((p, i) => {
		expect(Math.abs(p.w - EXPECTED[i].w) / EXPECTED[i].w).toBeLessThan(1e-7);
		expect(Math.abs(p.re - EXPECTED[i].re)).toBeLessThan(tol);
		expect(Math.abs(p.im - EXPECTED[i].im)).toBeLessThan(tol);
	});
}

function parseError(text: string, opts = {}): ResponseParseError {
	try {
		parseFrequencyResponse(text, opts);
	} catch (e) {
		if (e instanceof ResponseParseError) return e;
		throw e;
	}
	throw new Error('expected a parse error');
}

describe('parsing measured frequency responses', () => {
	it('magnitude in dB and phase in degrees over rad/s, units from the header', () => {
		const r = parseFrequencyResponse(
			'frequency (rad/s),magnitude (dB),phase (deg)\n0.1,-0.043214,-5.710593\n1,-3.010300,-45\n10,-20.043214,-84.289407\n'
		);
		expect(r.layout).toBe('magnitude-phase');
		expect(r.units).toEqual({ frequency: 'rad/s', magnitude: 'dB', phase: 'deg' });
		expect(r.delimiter).toBe(',');
		expectPoints(r.points);
		expect(r.points.map((p) => p.row)).toEqual([2, 3, 4]);
	});

	it('absolute magnitude over Hz with semicolons', () => {
		const r = parseFrequencyResponse(
			'f [Hz];gain [abs];phase [deg]\n0.0159154943;0.9950372;-5.7105931\n0.1591549431;0.7071068;-45\n1.591549431;0.0995037;-84.2894069\n'
		);
		expect(r.units.frequency).toBe('Hz');
		expect(r.units.magnitude).toBe('abs');
		expect(r.delimiter).toBe(';');
		expectPoints(r.points, 2e-7 + 1e-6);
	});

	it('real and imaginary parts, tab-separated, with units chosen because the header is silent', () => {
		const text = 'w\tRe\tIm\n0.1\t0.990099\t-0.0990099\n1\t0.5\t-0.5\n10\t0.00990099\t-0.0990099\n';
		const e = parseError(text);
		expect(e.field).toBe('frequencyUnit');
		const r = parseFrequencyResponse(text, { frequencyUnit: 'rad/s' });
		expect(r.layout).toBe('real-imaginary');
		expect(r.delimiter).toBe('\t');
		expectPoints(r.points, 1e-6);
	});

	it('no header: asks for the layout and units, then reads Hz', () => {
		const text =
			'0.0159154943,0.990099,-0.0990099\n0.1591549431,0.5,-0.5\n1.591549431,0.00990099,-0.0990099\n';
		expect(parseError(text).field).toBe('layout');
		expect(parseError(text, { layout: 'real-imaginary' }).field).toBe('frequencyUnit');
		const r = parseFrequencyResponse(text, { layout: 'real-imaginary', frequencyUnit: 'Hz' });
		expect(r.header).toBeNull();
		expectPoints(r.points, 1e-6);
	});

	it('asks for the magnitude unit when the header does not give it, and refuses a contradicting choice', () => {
		const text =
			'freq_hz,mag,phase_deg\n0.0159154943,0.9950372,-5.7105931\n0.1591549431,0.7071068,-45\n1.591549431,0.0995037,-84.2894069\n';
		expect(parseError(text).field).toBe('magnitudeUnit');
		expectPoints(parseFrequencyResponse(text, { magnitudeUnit: 'abs' }).points, 2e-6);
		expect(parseError(text, { magnitudeUnit: 'abs', frequencyUnit: 'rad/s' }).field).toBe('frequencyUnit');
	});

	it('reads decimal commas with semicolons, space-separated columns and phase in radians', () => {
		const comma =
			'Frequency [rad/s];Magnitude [dB];Phase [deg]\n0,1;-0,043214;-5,710593\n1;-3,0103;-45\n10;-20,043214;-84,289407\n';
		expectPoints(parseFrequencyResponse(comma).points);
		const spaces =
			'# rig 3, channel 2\nw(rad/s) mag(dB) phase(rad)\n0.1 -0.043214 -0.0996687\n1 -3.0103 -0.7853982\n10 -20.043214 -1.4711277\n';
		const r = parseFrequencyResponse(spaces);
		expect(r.delimiter).toBe(' ');
		expect(r.units.phase).toBe('rad');
		expectPoints(r.points);
		expect(r.points[0].row).toBe(3);
	});

	describe('malformed files name the row and column', () => {
		it('missing column', () => {
			const e = parseError('frequency (Hz),magnitude (dB)\n1,-3\n');
			expect(e.row).toBe(1);
			expect(e.column).toBe('phase');
			expect(e.message).toMatch(/phase column is missing/);
		});
		it('no frequency column', () => {
			expect(parseError('gain (dB),phase (deg)\n-3,-45\n').message).toMatch(/no frequency column/);
		});
		it('text in a number cell', () => {
			const e = parseError('frequency (rad/s),magnitude (dB),phase (deg)\n0.1,-0.04,-5.7\n1,abc,-45\n');
			expect(e.row).toBe(3);
			expect(e.column).toBe('magnitude (dB)');
			expect(e.message).toBe('Row 3, column "magnitude (dB)": "abc" is not a number.');
		});
		it('empty cell and short row', () => {
			const e = parseError('frequency (rad/s),magnitude (dB),phase (deg)\n0.1,-0.04\n');
			expect(e.row).toBe(2);
			expect(e.column).toBe('phase (deg)');
		});
		it('non-increasing frequency', () => {
			const e = parseError(
				'frequency (rad/s),magnitude (dB),phase (deg)\n0.1,-0.04,-5.7\n1,-3,-45\n1,-3,-45\n'
			);
			expect(e.row).toBe(4);
			expect(e.column).toBe('frequency (rad/s)');
			expect(e.message).toMatch(/does not increase \(row 3 has 1\)/);
		});
		it('zero or negative frequency, negative absolute magnitude', () => {
			expect(parseError('f (Hz),mag (abs),phase (deg)\n0,1,0\n').message).toMatch(/Row 2.*not positive/);
			expect(parseError('f (Hz),mag (abs),phase (deg)\n1,-1,0\n').message).toMatch(
				/Row 2.*cannot be negative/
			);
		});
		it('a header without data', () => {
			expect(parseError('frequency (Hz),magnitude (dB),phase (deg)\n').message).toMatch(/no data rows/);
		});
	});

	describe('a garbled file lists every problem, not only the first', () => {
		it('missing units, text, a short row and a falling frequency are all reported', () => {
			// Row 1 header without units; row 3 "abc"; row 4 has no phase; row 5 goes back to 1.
			const e = parseError('f,mag,phase\n1,0.5,-10\n2,abc,-20\n3,0.4\n1,0.3,-30\n');
			expect(e.problems.map((p) => [p.field, p.row])).toEqual([
				['frequencyUnit', null],
				['magnitudeUnit', null],
				['file', 3],
				['file', 4],
				['file', 5]
			]);
			// The first problem is still the error's own message (what the API has always answered).
			expect(e.message).toMatch(/header does not say which unit the frequency is in/);
			expect(e.problems[2].message).toBe('Row 3, column "mag": "abc" is not a number.');
			expect(e.problems[3].message).toBe('Row 4, column "phase": the cell is empty.');
			expect(e.problems[4].message).toMatch(/Row 5.*does not increase \(row 4 has 3\)/);
			expect(e.more).toBe(0);
		});
		it('stops listing at MAX_PROBLEMS and counts the rest', () => {
			const rows = Array.from({ length: MAX_PROBLEMS + 7 }, (_, i) => `${i + 1},x,0`).join('\n');
			const e = parseError(`frequency (Hz),magnitude (dB),phase (deg)\n${rows}\n`);
			expect(e.problems.length).toBe(MAX_PROBLEMS);
			expect(e.more).toBe(7);
		});
	});
});
