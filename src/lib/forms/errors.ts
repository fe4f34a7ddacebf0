// A refused form's errors: each problem once, in place under its field; the message at the top says only
// what happened and how many problems are marked, so no problem is read twice. Used by form actions
// (no JavaScript) and by forms that post with JavaScript, so both show the same thing.

export type FormErrors = Record<string, string>;

/** How many problems `fields` holds: a field may list several, one per line, and end "…and N more." */
export function problemCount(fields: Record<string, string>): number {
	let n = 0;
	for (const m of Object.values(fields))
		for (const line of m.split('\n')) {
			const more = /^…and (\d+) more\.?$/.exec(line.trim());
			if (more) n += Number(more[1]);
			else if (line.trim() !== '') n += 1;
		}
	return n;
}

/**
 * `fields` plus the top message `_`: the service's own message when no field is marked, otherwise
 * "<outcome>: N problems, marked below." (`outcome` says what did not happen, e.g. "Nothing was stored").
 */
export function formErrors(message: string, fields: Record<string, string>, outcome: string): FormErrors {
	const { _: top, ...marked } = fields;
	const n = problemCount(marked);
	if (n === 0) return { _: top ?? message };
	return { ...marked, _: `${outcome}: ${n === 1 ? 'one problem' : `${n} problems`}, marked below.` };
}
