import { describe, expect, it } from 'vitest';
import { byIdentifier, compareIdentifiers } from '../../../src/lib/requirements/order';

// Natural order as people number things: "VX7-2" comes before "VX7-10" (a plain string sort puts
// "VX7-10" first because "1" < "2").
describe('natural order of identifiers', () => {
	it('compares the numbers as numbers', () => {
		expect(compareIdentifiers('VX7-2', 'VX7-10')).toBeLessThan(0);
		expect(compareIdentifiers('VX7-10', 'VX7-9')).toBeGreaterThan(0);
		expect(compareIdentifiers('VX7-3', 'VX7-3')).toBe(0);
	});

	it('sorts a mixed list, projects first by key, then by number', () => {
		const ids = ['VX7-10', 'VX7-2', 'AB-100', 'VX7-1', 'AB-20', 'VX7-21', 'vx7-3'];
		expect(byIdentifier(ids, (x) => x)).toEqual([
			'AB-20',
			'AB-100',
			'VX7-1',
			'VX7-2',
			'vx7-3',
			'VX7-10',
			'VX7-21'
		]);
	});

	it('orders group keys (lists of parents) by their first identifier, then the next', () => {
		const keys = ['VX7-10', 'VX7-2, VX7-10', 'VX7-2', 'VX7-9'];
		expect(byIdentifier(keys, (x) => x)).toEqual(['VX7-2', 'VX7-2, VX7-10', 'VX7-9', 'VX7-10']);
	});

	it('is a total order: ties only for the same text', () => {
		expect(compareIdentifiers('VX7-2', 'vx7-2')).not.toBe(0);
	});
});
