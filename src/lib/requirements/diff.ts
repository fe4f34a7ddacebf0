// A readable, word-level diff between two revisions of a requirement. Pure (browser and server).
import { diffArrays } from 'diff';

export type DiffKind = 'same' | 'added' | 'removed';
export interface DiffPart {
	kind: DiffKind;
	text: string;
}

// Tokens: whitespace runs, numbers as a whole ("1.995", "-50"), words, then single symbols. The
// package's own word tokenizer splits "1.8" at the point, which makes changed numbers unreadable.
const TOKEN = /\s+|[-+±−]?\d+(?:[.,]\d+)*(?:[eE][-+]?\d+)?|[\p{L}\p{N}_’'-]+|./gsu;
const tokens = (s: string) => s.match(TOKEN) ?? [];

/** Word-level diff of two texts: runs of unchanged, removed and added words, in reading order. */
export function wordDiff(before: string, after: string): DiffPart[] {
	const parts = diffArrays(tokens(before ?? ''), tokens(after ?? ''));
	const out: DiffPart[] = [];
	for (const p of parts) {
		const kind: DiffKind = p.added ? 'added' : p.removed ? 'removed' : 'same';
		const text = p.value.join('');
		const last = out[out.length - 1];
		if (last && last.kind === kind) last.text += text;
		else out.push({ kind, text });
	}
	// A change run interrupted only by whitespace reads better as one removal and one addition:
	// "a b" -> "c d" rather than a->c, " ", b->d.
	const merged: DiffPart[] = [];
	let i = 0;
	while (i < out.length) {
		if (out[i].kind === 'same') {
			merged.push(out[i++]);
			continue;
		}
		let removed = '';
		let added = '';
		while (i < out.length) {
			const p = out[i];
			if (p.kind === 'removed') removed += p.text;
			else if (p.kind === 'added') added += p.text;
			else if (/^\s+$/.test(p.text) && i + 1 < out.length && out[i + 1].kind !== 'same') {
				removed += p.text;
				added += p.text;
			} else break;
			i++;
		}
		// Whitespace both sides end with is unchanged text, not part of the change.
		let tail = '';
		if (removed && added) {
			const m = /\s+$/.exec(removed);
			if (m && added.endsWith(m[0])) {
				tail = m[0];
				removed = removed.slice(0, -tail.length);
				added = added.slice(0, -tail.length);
			}
		}
		if (removed) merged.push({ kind: 'removed', text: removed });
		if (added) merged.push({ kind: 'added', text: added });
		if (tail) {
			if (i < out.length && out[i].kind === 'same') out[i] = { kind: 'same', text: tail + out[i].text };
			else merged.push({ kind: 'same', text: tail });
		}
	}
	return merged;
}

/** The fields a revision carries, as shown in the history. */
export interface RevisionContent {
	title: string;
	statement: string;
	rationale: string;
	level: string;
	assuranceLevel: string;
	methods: string[];
	owner: string;
	status: string;
}

export const FIELD_LABELS: Record<keyof RevisionContent, string> = {
	title: 'Title',
	statement: 'Statement',
	rationale: 'Rationale',
	level: 'Level',
	assuranceLevel: 'Assurance level',
	methods: 'Verification methods',
	owner: 'Owner',
	status: 'Status'
};

export interface FieldChange {
	field: keyof RevisionContent;
	label: string;
	/** Text fields get a word diff; the others show before -> after. */
	parts?: DiffPart[];
	before: string;
	after: string;
}

const TEXT_FIELDS = new Set<keyof RevisionContent>(['title', 'statement', 'rationale']);
const show = (v: string | string[]) => (Array.isArray(v) ? v.join(', ') : v);

/** What changed from one revision to the next, field by field (unchanged fields are left out). */
export function revisionChanges(before: RevisionContent | null, after: RevisionContent): FieldChange[] {
	const out: FieldChange[] = [];
	for (const field of Object.keys(FIELD_LABELS) as (keyof RevisionContent)[]) {
		const a = before ? show(before[field]) : '';
		const b = show(after[field]);
		if (a === b) continue;
		out.push({
			field,
			label: FIELD_LABELS[field],
			before: a,
			after: b,
			...(TEXT_FIELDS.has(field) ? { parts: wordDiff(a, b) } : {})
		});
	}
	return out;
}
