import { describe, expect, it } from 'vitest';
import { MAX_REDIRECT_LENGTH, safeRedirect } from '../../src/lib/server/safe-redirect';

describe('safeRedirect', () => {
	it('keeps same-site paths and sends everything else home', () => {
		expect(safeRedirect('/p/VX7/requirements?state=open')).toBe('/p/VX7/requirements?state=open');
		for (const v of ['https://elsewhere.test/', '//elsewhere.test', '/\\elsewhere.test', 'p/VX7', 7, null])
			expect(safeRedirect(v)).toBe('/');
	});
	it('sends an overlong target home instead of into a header no client can read', () => {
		expect(safeRedirect('/' + 'a'.repeat(MAX_REDIRECT_LENGTH - 1))).toHaveLength(MAX_REDIRECT_LENGTH);
		expect(safeRedirect('/' + 'a'.repeat(MAX_REDIRECT_LENGTH))).toBe('/');
	});
});
