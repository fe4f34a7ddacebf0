import { describe, expect, it } from 'vitest';
import { revisionChanges, wordDiff, type RevisionContent } from '../../../src/lib/requirements/diff';

const rebuild = (parts: ReturnType<typeof wordDiff>, side: 'before' | 'after') =>
	parts
		.filter((p) => p.kind === 'same' || p.kind === (side === 'before' ? 'removed' : 'added'))
		.map((p) => p.text)
		.join('');

describe('word diff between revisions', () => {
	it('marks changed words and keeps numbers whole', () => {
		const a = 'The loop shall be stable for every gain in [0.5, 1.8].';
		const b = 'The loop shall remain stable for every gain in [0.5, 2.0].';
		expect(wordDiff(a, b)).toEqual([
			{ kind: 'same', text: 'The loop shall ' },
			{ kind: 'removed', text: 'be' },
			{ kind: 'added', text: 'remain' },
			{ kind: 'same', text: ' stable for every gain in [0.5, ' },
			{ kind: 'removed', text: '1.8' },
			{ kind: 'added', text: '2.0' },
			{ kind: 'same', text: '].' }
		]);
	});

	it('joins a change of several words into one removal and one addition', () => {
		const parts = wordDiff('The damper shall be very fast now.', 'The damper shall settle within 2 s now.');
		expect(parts.filter((p) => p.kind === 'removed').map((p) => p.text)).toEqual(['be very fast']);
		expect(parts.filter((p) => p.kind === 'added').map((p) => p.text)).toEqual(['settle within 2 s']);
	});

	it('rebuilds both texts exactly (no text lost or invented)', () => {
		const cases: [string, string][] = [
			['', 'New statement.'],
			['Old statement.', ''],
			['A  b\n c', 'A b\nc d'],
			[
				'The loop shall remain stable ±6 dB.',
				'The pitch loop shall remain absolutely stable within ±8 dB, TBD.'
			],
			['same', 'same']
		];
		for (const [a, b] of cases) {
			const parts = wordDiff(a, b);
			expect(rebuild(parts, 'before'), JSON.stringify([a, b])).toBe(a);
			expect(rebuild(parts, 'after'), JSON.stringify([a, b])).toBe(b);
		}
	});

	it('lists only the fields that changed, with a word diff for text fields', () => {
		const r1: RevisionContent = {
			title: 'Elevon stability',
			statement: 'The loop shall be stable.',
			rationale: '',
			level: 'loop',
			assuranceLevel: 'B',
			methods: ['analysis'],
			owner: 'Eng',
			status: 'draft'
		};
		const r2 = {
			...r1,
			statement: 'The loop shall remain stable.',
			methods: ['analysis', 'test'],
			status: 'in-review'
		};
		const changes = revisionChanges(r1, r2);
		expect(changes.map((c) => c.field)).toEqual(['statement', 'methods', 'status']);
		expect(changes[0].parts).toBeDefined();
		expect(changes[1]).toMatchObject({ before: 'analysis', after: 'analysis, test' });
		expect('parts' in changes[1]).toBe(false);
		expect(revisionChanges(r1, r1)).toEqual([]);
		expect(revisionChanges(null, r1).length).toBeGreaterThan(5);
	});
});
