// Evidence state per verification method: test evidence counts only through the current revision of
// an item, and only once a certifier accepted it; an item awaiting review is an open review.
import type { Tone } from './analysis';

export const EVIDENCE_STATES = ['accepted', 'awaiting-review', 'rejected', 'none'] as const;
export type EvidenceState = (typeof EVIDENCE_STATES)[number];

export const EVIDENCE_LOOK: Record<EvidenceState, { symbol: string; label: string; tone: Tone }> = {
	accepted: { symbol: '✓', label: 'Accepted evidence', tone: 'ok' },
	'awaiting-review': { symbol: '…', label: 'Evidence awaiting review', tone: 'wait' },
	rejected: { symbol: '✕', label: 'Evidence rejected', tone: 'bad' },
	none: { symbol: '○', label: 'No evidence', tone: 'none' }
};

/** One evidence item's current revision linked to the requirement. */
export interface EvidenceFact {
	method: string;
	decision: 'accepted' | 'rejected' | null;
}

export interface EvidenceCounts {
	accepted: number;
	rejected: number;
	unreviewed: number;
}

export function countEvidence(items: readonly EvidenceFact[]): EvidenceCounts {
	return {
		accepted: items.filter((e) => e.decision === 'accepted').length,
		rejected: items.filter((e) => e.decision === 'rejected').length,
		unreviewed: items.filter((e) => e.decision === null).length
	};
}

/** The evidence's own state: accepted wins, then an open review, then a rejection. */
export function evidenceStateOf(items: readonly EvidenceFact[]): EvidenceState {
	const c = countEvidence(items);
	if (c.accepted > 0) return 'accepted';
	if (c.unreviewed > 0) return 'awaiting-review';
	if (c.rejected > 0) return 'rejected';
	return 'none';
}

/** The evidence state of each method that has evidence, plus every method asked for. */
export function evidenceByMethod(
	items: readonly EvidenceFact[],
	methods: readonly string[] = []
): Record<string, EvidenceState> {
	const out: Record<string, EvidenceState> = {};
	for (const m of new Set([...methods, ...items.map((e) => e.method)]))
		out[m] = evidenceStateOf(items.filter((e) => e.method === m));
	return out;
}
