// JSON typed into a form, parsed with the place of the first mistake as line and column. The live
// preview (in the browser) and the form action (on the server) use this one helper, so both say the
// same thing: V8 in Chromium already adds "(line L column C)" to its message, Node 20's V8 gives only
// "at position N", and "Unexpected end of JSON input" gives neither (the mistake is then at the end).

export type JsonTextResult =
	{ ok: true; value: unknown } | { ok: false; message: string; line: number; column: number };

/** Line and column (both from 1) of a 0-based character offset in `text`. */
export function lineColumnAt(text: string, offset: number): { line: number; column: number } {
	const before = text.slice(0, Math.max(0, Math.min(offset, text.length)));
	const lines = before.split('\n');
	return { line: lines.length, column: lines[lines.length - 1].length + 1 };
}

/** The engine's words without V8's tail (position, line/column, a quoted excerpt of the input). */
function reason(message: string): string {
	const m = message
		.replace(/\s*\(line \d+ column \d+\)/, '')
		.replace(/\s+in JSON at position \d+/, '')
		.replace(/,\s*".*" is not valid JSON$/s, '')
		.trim();
	if (/^Unexpected end of JSON input$/i.test(m)) return 'the text ends before the JSON is complete';
	return m.replace(/\.$/, '') || 'not valid JSON';
}

export function parseJsonText(text: string): JsonTextResult {
	try {
		return { ok: true, value: JSON.parse(text) };
	} catch (e) {
		const message = e instanceof Error ? e.message : String(e);
		const lc = /\(line (\d+) column (\d+)\)/.exec(message);
		const pos = /at position (\d+)/.exec(message);
		const place = lc
			? { line: Number(lc[1]), column: Number(lc[2]) }
			: lineColumnAt(text, pos ? Number(pos[1]) : firstProblemOffset(text));
		return { ok: false, ...place, message: `line ${place.line}, column ${place.column}: ${reason(message)}` };
	}
}

/**
 * Where the parser stopped when V8 names no position ("Unexpected token 'x', "..." is not valid JSON",
 * "Unexpected end of JSON input"). JSON is read left to right, so a prefix of the text fails somewhere
 * other than at its end exactly when it contains the offending character: the shortest such prefix is
 * found by bisection (about log2(length) parses).
 */
function firstProblemOffset(text: string): number {
	const failsInside = (n: number) => {
		try {
			JSON.parse(text.slice(0, n));
			return false;
		} catch (e) {
			return !/end of (JSON )?input/i.test(e instanceof Error ? e.message : '');
		}
	};
	if (!failsInside(text.length)) return text.trimEnd().length;
	let lo = 0;
	let hi = text.length;
	while (hi - lo > 1) {
		const mid = (lo + hi) >> 1;
		if (failsInside(mid)) hi = mid;
		else lo = mid;
	}
	return hi - 1;
}
