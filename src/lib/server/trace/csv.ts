// The one CSV rule of every export (the trace matrix download and the data package's archive):
// RFC 4180 quoting, CRLF line ends, a UTF-8 byte-order mark first (so spreadsheet programs read the
// file as UTF-8), and a guard against formula injection: a cell starting with =, +, - or @ is written
// as text, quoted and prefixed with an apostrophe, as the OWASP "CSV Injection" page recommends
// (OWASP Foundation, https://owasp.org/www-community/attacks/CSV_Injection). Tab and carriage return
// at the start are listed there too and get the same treatment.

export type CsvValue = string | number | null;

/** U+FEFF, written once at the start of the file. */
export const CSV_BOM = '\uFEFF';

const FORMULA_START = /^[=+\-@\t\r]/;

export function csvCell(v: CsvValue): string {
	if (v === null) return '';
	const s = String(v);
	// A number is data, not a formula (a negative number stays a number for the spreadsheet).
	if (typeof v === 'number') return s;
	if (FORMULA_START.test(s)) return `"'${s.replace(/"/g, '""')}"`;
	return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export const csvLine = (cells: CsvValue[]) => cells.map(csvCell).join(',') + '\r\n';
