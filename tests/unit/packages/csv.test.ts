import { describe, expect, it } from 'vitest';
import { CSV_BOM, csvCell, csvLine } from '../../../src/lib/server/trace/csv';

// The CSV rule (src/lib/server/trace/csv.ts). Expected cells written out by hand from RFC 4180 (quote a
// field holding a comma, quote or line break; double an inner quote) and the OWASP "CSV Injection"
// page (a cell starting with =, +, -, @, tab or carriage return is prefixed with an apostrophe and
// quoted, so the spreadsheet shows text instead of running a formula).
describe('csvCell', () => {
	it.each([
		['plain', 'plain'],
		['a, b', '"a, b"'],
		['say "hi"', '"say ""hi"""'],
		['two\r\nlines', '"two\r\nlines"'],
		['=1+2', `"'=1+2"`],
		['+SUM(A1)', `"'+SUM(A1)"`],
		['-2+3', `"'-2+3"`],
		['@cmd', `"'@cmd"`],
		['\tx', `"'\tx"`],
		['=HYPERLINK("http://x")', `"'=HYPERLINK(""http://x"")"`],
		['a=b', 'a=b']
	])('%j -> %j', (input, out) => expect(csvCell(input)).toBe(out));

	it('numbers stay numbers (a negative number is data, not a formula); null is empty', () => {
		expect(csvCell(-2.5)).toBe('-2.5');
		expect(csvCell(3)).toBe('3');
		expect(csvCell(null)).toBe('');
	});

	it('a line ends with CRLF; the byte-order mark is U+FEFF (EF BB BF in UTF-8)', () => {
		expect(csvLine(['a', '=b', 1])).toBe(`a,"'=b",1\r\n`);
		expect([...Buffer.from(CSV_BOM, 'utf8')]).toEqual([0xef, 0xbb, 0xbf]);
	});
});
