import { describe, expect, it } from 'vitest';
import { freshness, groupsOf, rolesFromGroups } from '../../../src/lib/server/identity/sso-rules';

describe('groupsOf', () => {
	it('reads an array of strings, or one string, and nothing else', () => {
		expect(groupsOf({ groups: ['a', ' b ', 'a', 3, '', null] }, 'groups')).toEqual(['a', 'b']);
		expect(groupsOf({ roles: 'flight' }, 'roles')).toEqual(['flight']);
		expect(groupsOf({ groups: { a: 1 } }, 'groups')).toEqual([]);
		expect(groupsOf({}, 'groups')).toEqual([]);
	});
});

describe('rolesFromGroups', () => {
	it('gives one role per project; with several groups the stated precedence decides', () => {
		const m = rolesFromGroups([
			{ project_id: '1', group_name: 'readers', role: 'viewer' },
			{ project_id: 1, group_name: 'eng', role: 'engineer' },
			{ project_id: 2, group_name: 'cert', role: 'certifier' },
			{ project_id: 2, group_name: 'ana', role: 'analyst' }
		]);
		expect(m.get(1)).toEqual({ role: 'engineer', groups: ['eng', 'readers'] });
		expect(m.get(2)).toEqual({ role: 'certifier', groups: ['ana', 'cert'] });
		expect(m.size).toBe(2);
	});
});

describe('freshness of a provider login (auth_time, OpenID Connect Core 1.0 section 2)', () => {
	const now = 1_800_000_000;
	it('accepts a login within the allowed age, including a small clock skew ahead', () => {
		expect(freshness(now - 300, now, 300)).toEqual({ fresh: true, ageSeconds: 300 });
		expect(freshness(now + 20, now, 300)).toEqual({ fresh: true, ageSeconds: 0 });
	});
	it('refuses one too old, too far in the future, or without auth_time', () => {
		expect(freshness(now - 301, now, 300)).toEqual({ fresh: false, reason: 'too-old', ageSeconds: 301 });
		expect(freshness(now + 31, now, 300)).toEqual({ fresh: false, reason: 'future', ageSeconds: -31 });
		expect(freshness(null, now, 300)).toEqual({ fresh: false, reason: 'none', ageSeconds: null });
		expect(freshness(Number.NaN, now, 300)).toMatchObject({ fresh: false, reason: 'none' });
	});
});
