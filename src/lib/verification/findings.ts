// A finding's states, words and moves (pure, browser-safe): every page, export, mail and the API read
// them here, and the SQL of open findings takes OPEN_FINDING_STATES as its parameter.
import type { Tone } from './analysis';

export const FINDING_STATES = ['open', 'in-work', 'resolved', 'closed', 'deferred', 'not-a-defect'] as const;
export type FindingState = (typeof FINDING_STATES)[number];

/** Not yet closed, deferred or declared not a defect: these block a baseline and show as open items. */
export const OPEN_FINDING_STATES: readonly FindingState[] = ['open', 'in-work', 'resolved'];
export const isOpenFinding = (s: string) => (OPEN_FINDING_STATES as readonly string[]).includes(s);

export const FINDING_LOOK: Record<FindingState, { symbol: string; label: string; tone: Tone }> = {
	open: { symbol: '!', label: 'Open', tone: 'bad' },
	'in-work': { symbol: '⟳', label: 'In work', tone: 'wait' },
	resolved: { symbol: '◐', label: 'Resolved, awaiting closure', tone: 'wait' },
	closed: { symbol: '✓', label: 'Closed', tone: 'ok' },
	deferred: { symbol: '»', label: 'Deferred', tone: 'none' },
	'not-a-defect': { symbol: '–', label: 'Not a defect', tone: 'none' }
};

export const FINDING_CAUSES = ['analysis', 'evidence', 'model-mismatch', 'manual'] as const;
export type FindingCause = (typeof FINDING_CAUSES)[number];
export const CAUSE_LABELS: Record<FindingCause, string> = {
	analysis: 'Analysis run',
	evidence: 'Rejected evidence',
	'model-mismatch': 'Model versus test beyond tolerance',
	manual: 'Raised by hand'
};

/** Moves anyone working on findings may make (no signature). */
export const WORK_MOVES: Record<FindingState, readonly FindingState[]> = {
	open: ['in-work'],
	'in-work': ['open', 'resolved'],
	resolved: ['in-work'],
	closed: [],
	deferred: [],
	'not-a-defect': []
};

/** Moves that need a certifier's signature, and from where. */
export const SIGNED_MOVES = ['closed', 'deferred', 'not-a-defect'] as const;
export type SignedMove = (typeof SIGNED_MOVES)[number];
export function canSignMove(from: FindingState, to: SignedMove): boolean {
	if (to === 'closed') return isOpenFinding(from) || from === 'deferred';
	return isOpenFinding(from);
}
