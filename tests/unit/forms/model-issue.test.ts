import { describe, expect, it } from 'vitest';
import { ServiceError } from '../../../src/lib/server/errors';
import { formErrors, problemCount } from '../../../src/lib/forms/errors';
import { modelIssuesInWords, modelPathInWords } from '../../../src/lib/forms/model-issue';
import { parsePublish } from '../../../src/lib/server/models/service';

const points = [
	{ label: 'hover', model: { kind: 'tf', num: [1], den: [] } },
	{ label: 'cruise', model: { kind: 'zpk', zeros: [], poles: [[-1, 2]], gain: 1 } }
];

describe('model error paths in the user words', () => {
	it.each([
		['operatingPoints.0.model.den', 'Operating point 1 (hover), denominator'],
		['operatingPoints.0.model.num.2', 'Operating point 1 (hover), numerator coefficient 3'],
		['operatingPoints.1.model.poles.0', 'Operating point 2 (cruise), pole 1'],
		['operatingPoints.1.model.poles.0.1', 'Operating point 2 (cruise), pole 1, imaginary part'],
		['operatingPoints.1.model.kind', 'Operating point 2 (cruise), model kind'],
		['operatingPoints.0.label', 'Operating point 1 (hover), label'],
		['operatingPoints.4.model.A.1.0', 'Operating point 5, matrix A, row 2, column 1'],
		['operatingPoints', 'The operating points'],
		['note', 'Note']
	])('%s -> %s', (path, words) => {
		expect(modelPathInWords(path, points)).toBe(words);
	});

	it('a refused publish body: each problem once, no code path', () => {
		let err: unknown;
		try {
			parsePublish({ operatingPoints: points });
		} catch (e) {
			err = e;
		}
		expect(err).toBeInstanceOf(ServiceError);
		const lines = modelIssuesInWords((err as ServiceError).fields, points);
		expect(lines.length).toBeGreaterThanOrEqual(2);
		expect(lines[0]).toBe('Operating point 1 (hover), denominator: denominator is empty');
		expect(lines.some((l) => l.startsWith('Operating point 2 (cruise), pole'))).toBe(true);
		for (const l of lines) expect(l).not.toMatch(/operatingPoints\.|\.model\./);
		expect(new Set(lines).size).toBe(lines.length);
	});

	it('the top message only counts the problems listed under the fields', () => {
		const e = formErrors(
			'operatingPoints.0.model.den: denominator is empty',
			{ operatingPoints: 'a\nb' },
			'Nothing was published'
		);
		expect(e._).toBe('Nothing was published: 2 problems, marked below.');
		expect(e._).not.toContain('denominator');
		expect(formErrors('Not allowed.', {}, 'Nothing was stored')).toEqual({ _: 'Not allowed.' });
		expect(problemCount({ file: 'x\ny\n…and 5 more.', layout: 'z' })).toBe(8);
	});
});
