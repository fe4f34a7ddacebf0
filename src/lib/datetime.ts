// The one date-time format of every page: the reader's own time zone (the browser's), a 24-hour clock
// and the ISO 8601 order of fields (YYYY-MM-DD HH:mm), so no reader has to guess between day/month
// orders or AM/PM. The exact instant in UTC goes into the title (shown on hover) by way of
// src/lib/components/DateTime.svelte. Files and exports keep plain ISO 8601 UTC; this module is for
// what people read on screen. Pure: no I/O, usable on the server (which renders UTC until the page
// starts in the browser) and in the browser.

export type Instant = string | number | Date;

export interface TimeOptions {
	/** An IANA zone ("Europe/Berlin", "UTC"); default: the zone of the runtime (the reader's browser). */
	timeZone?: string;
	/** Show seconds (default false). */
	seconds?: boolean;
}

function toDate(at: Instant): Date | null {
	const d = at instanceof Date ? at : new Date(at);
	return Number.isNaN(d.getTime()) ? null : d;
}

const formatters = new Map<string, Intl.DateTimeFormat>();
function parts(d: Date, timeZone: string | undefined): Record<string, string> {
	const key = timeZone ?? '';
	let f = formatters.get(key);
	if (!f) {
		// hourCycle h23: midnight is 00, never 24 (which hour12: false gives in some engines).
		f = new Intl.DateTimeFormat('en-GB', {
			timeZone,
			year: 'numeric',
			month: '2-digit',
			day: '2-digit',
			hour: '2-digit',
			minute: '2-digit',
			second: '2-digit',
			hourCycle: 'h23'
		});
		formatters.set(key, f);
	}
	const out: Record<string, string> = {};
	for (const p of f.formatToParts(d)) out[p.type] = p.value;
	return out;
}

/** "2026-12-02 06:31" (or with ":27" seconds) in the reader's zone; "—" for a missing or bad instant. */
export function formatDateTime(at: Instant | null | undefined, opts: TimeOptions = {}): string {
	const d = at == null || at === '' ? null : toDate(at);
	if (!d) return '—';
	const p = parts(d, opts.timeZone);
	return `${p.year}-${p.month}-${p.day} ${p.hour}:${p.minute}${opts.seconds ? ':' + p.second : ''}`;
}

/** "2026-12-02" in the reader's zone. */
export function formatDate(at: Instant | null | undefined, opts: Omit<TimeOptions, 'seconds'> = {}): string {
	const d = at == null || at === '' ? null : toDate(at);
	if (!d) return '—';
	const p = parts(d, opts.timeZone);
	return `${p.year}-${p.month}-${p.day}`;
}

/** "06:31:27" (24-hour) in the reader's zone. */
export function formatTime(at: Instant | null | undefined, opts: TimeOptions = {}): string {
	const d = at == null || at === '' ? null : toDate(at);
	if (!d) return '—';
	const p = parts(d, opts.timeZone);
	return `${p.hour}:${p.minute}${opts.seconds === false ? '' : ':' + p.second}`;
}

/** The exact instant for the hover text: "2026-12-02T05:31:27Z (UTC)". */
export function utcTitle(at: Instant | null | undefined): string {
	const d = at == null || at === '' ? null : toDate(at);
	if (!d) return '';
	return `${d.toISOString().replace(/\.\d{3}Z$/, 'Z')} (UTC)`;
}

/** A UTC calendar day "2026-12-02", for things counted per UTC day (the coverage history). */
export function utcDay(at: Instant): string {
	return formatDate(at, { timeZone: 'UTC' });
}

/** The label suffix of a date input: browsers draw the field in their own order; the value is ISO. */
export const DATE_INPUT_HINT = 'YYYY-MM-DD';
