import { describe, expect, it } from 'vitest';
import { formatDate, formatDateTime, formatTime, utcDay, utcTitle } from '../../../src/lib/datetime';

// Expected values worked out by hand from the zones' published offsets (IANA tz database):
// Asia/Kolkata is UTC+05:30 all year; America/New_York is UTC-05:00 in winter and UTC-04:00 from the
// second Sunday of March (2026-03-08, 02:00 local) under the US Energy Policy Act of 2005.
describe('the one date-time format', () => {
	const at = '2026-12-02T01:05:46.123Z';

	it('uses the ISO order of fields and a 24-hour clock', () => {
		expect(formatDateTime(at, { timeZone: 'UTC' })).toBe('2026-12-02 01:05');
		expect(formatDateTime(at, { timeZone: 'UTC', seconds: true })).toBe('2026-12-02 01:05:46');
		expect(formatDateTime('2026-12-02T13:05:46Z', { timeZone: 'UTC' })).toBe('2026-12-02 13:05');
		expect(formatTime('2026-12-02T13:05:46Z', { timeZone: 'UTC' })).toBe('13:05:46');
		expect(formatTime(at, { timeZone: 'UTC' })).not.toMatch(/AM|PM/i);
	});

	it('writes midnight as 00, never 24', () => {
		expect(formatDateTime('2026-12-02T00:00:00Z', { timeZone: 'UTC', seconds: true })).toBe(
			'2026-12-02 00:00:00'
		);
	});

	it("shows the reader's zone, crossing the date line where the offset does", () => {
		expect(formatDateTime(at, { timeZone: 'Asia/Kolkata' })).toBe('2026-12-02 06:35');
		expect(formatDateTime(at, { timeZone: 'America/New_York' })).toBe('2026-12-01 20:05');
		expect(formatDate(at, { timeZone: 'America/New_York' })).toBe('2026-12-01');
		// Summer time: 12:00 UTC on 2026-07-01 is 08:00 in New York (UTC-4).
		expect(formatDateTime('2026-07-01T12:00:00Z', { timeZone: 'America/New_York' })).toBe('2026-07-01 08:00');
		// One hour before and after the spring change (07:00 UTC = 02:00 EST, which becomes 03:00 EDT).
		expect(formatDateTime('2026-03-08T06:30:00Z', { timeZone: 'America/New_York' })).toBe('2026-03-08 01:30');
		expect(formatDateTime('2026-03-08T07:30:00Z', { timeZone: 'America/New_York' })).toBe('2026-03-08 03:30');
	});

	it('gives the exact UTC instant for the hover text', () => {
		expect(utcTitle(at)).toBe('2026-12-02T01:05:46Z (UTC)');
		expect(utcTitle(new Date(Date.UTC(2026, 0, 5, 7, 8, 9)))).toBe('2026-01-05T07:08:09Z (UTC)');
		expect(utcDay('2026-12-01T23:59:59Z')).toBe('2026-12-01');
	});

	it('says "—" for a missing or unreadable instant instead of "Invalid Date"', () => {
		expect(formatDateTime(null)).toBe('—');
		expect(formatDateTime('')).toBe('—');
		expect(formatDate('not a date')).toBe('—');
		expect(utcTitle(undefined)).toBe('');
	});
});
