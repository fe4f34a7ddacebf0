// Placeholders that keep a requirement open: "to be determined / reviewed / supplied / confirmed /
// agreed". The NASA Systems Engineering Handbook (Appendix C) asks that TBD/TBR items are tracked and
// closed before a baseline; TBS, TBC and TBA are the same kind of open value. One pattern, read by the
// quality hints (approval), the verification blockers (matrix, coverage, exports) and the freeze check.

export const PLACEHOLDER_WORDS = ['TBD', 'TBR', 'TBS', 'TBC', 'TBA'] as const;

/** A fresh global regular expression (matchAll needs its own lastIndex). */
export function placeholderPattern(): RegExp {
	return new RegExp(`\\b(?:${PLACEHOLDER_WORDS.join('|')})\\b`, 'g');
}

/** Every placeholder in a text, with its position. */
export function placeholdersIn(text: string | null | undefined): { word: string; index: number }[] {
	const out: { word: string; index: number }[] = [];
	for (const m of (text ?? '').matchAll(placeholderPattern()))
		if (m.index !== undefined) out.push({ word: m[0], index: m.index });
	return out;
}
