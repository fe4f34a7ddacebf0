import { describe, expect, it } from 'vitest';
import { CAPABILITIES, ROLES, allows, capabilities, rolesFor } from '../../../src/lib/server/identity/roles';

// The one role table. The expected grants are written out here as the product's permission rules
// (DEVELOPERS.md and the route table state the same), not computed from the table under test.
const GRANTS: Record<(typeof ROLES)[number], string[]> = {
	viewer: ['read'],
	engineer: [
		'read',
		'writeRequirements',
		'uploadEvidence',
		'setTolerance',
		'reviewRequirements',
		'workFindings'
	],
	analyst: ['read', 'writeModels', 'uploadEvidence', 'setTolerance', 'reviewRequirements', 'workFindings'],
	certifier: [
		'read',
		'uploadEvidence',
		'reviewEvidence',
		'freezeBaselines',
		'reviewRequirements',
		'workFindings',
		'decideFindings',
		'generatePackages'
	]
};

describe('role table', () => {
	it('grants each role exactly its capabilities', () => {
		for (const role of ROLES) {
			const can = capabilities(role, false);
			const granted = Object.entries(can)
				.filter(([, v]) => v)
				.map(([k]) => k)
				.sort();
			expect(granted, role).toEqual([...GRANTS[role]].sort());
		}
	});

	it('lets a signed-in site administrator do everything, whatever their project role', () => {
		for (const role of [...ROLES, 'admin' as const]) {
			expect(Object.values(capabilities(role, true)).every(Boolean), role).toBe(true);
		}
		// A site administrator who is not a member acts as 'admin'.
		expect(Object.values(capabilities('admin', false)).every(Boolean)).toBe(true);
	});

	it('gives an API token only its own role (siteAdmin is false for a token)', () => {
		expect(allows('viewer', false, 'freezeBaselines')).toBe(false);
		expect(allows('certifier', false, 'freezeBaselines')).toBe(true);
		expect(allows('analyst', false, 'writeRequirements')).toBe(false);
	});

	it('names the roles a capability needs', () => {
		expect(rolesFor('uploadEvidence')).toBe('engineer, analyst or certifier');
		expect(rolesFor('reviewEvidence')).toBe('certifier');
		expect(Object.keys(CAPABILITIES)).toContain('read');
	});
});
