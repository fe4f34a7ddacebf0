import { describe, expect, it } from 'vitest';
import { lineColumnAt, parseJsonText } from '../../../src/lib/forms/json-text';

// The expected places are counted by hand in each text (line and column from 1, as an editor shows
// them); they do not come from the helper.
describe('parseJsonText', () => {
	it('parses valid JSON', () => {
		expect(parseJsonText('[{"label": "hover"}]')).toEqual({ ok: true, value: [{ label: 'hover' }] });
	});

	it.each([
		// A trailing comma before "}": the "}" is line 2, column 10.
		['[\n {"a": 1,}\n]', 2, 10, /double-quoted property name/],
		// Two strings without a comma: the second '"' is line 2, column 17.
		['[\n  {"label": "a" "b"}]', 2, 17, /after property value/],
		// A misspelt literal: V8 names the "}" (line 1, column 10) but no position.
		['{"a": tru}', 1, 10, /Unexpected token/],
		// A stray letter after two spaces: column 3.
		['  x', 1, 3, /Unexpected token/],
		// Cut short: the place is the end of the text (after "[1," is column 4).
		['[1,', 1, 4, /ends before the JSON is complete/]
	])('%j -> line %i, column %i', (text, line, column, reason) => {
		const r = parseJsonText(text);
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect({ line: r.line, column: r.column }).toEqual({ line, column });
		expect(r.message.startsWith(`line ${line}, column ${column}: `)).toBe(true);
		expect(r.message).toMatch(reason);
		// V8's own tail (position, quoted input) is not repeated.
		expect(r.message).not.toMatch(/position \d|is not valid JSON/);
	});

	it('reads the place from a browser message that already gives it', () => {
		// Chromium's V8 says "... at position 11 (line 2 column 10)"; the helper must agree with Node's.
		const text = '[\n {"a": 1,}\n]';
		expect(lineColumnAt(text, 11)).toEqual({ line: 2, column: 10 });
	});
});
