// Words and symbols for the states the trace matrix, the exports and the coverage dashboard show.
// Shared by server and browser code: no imports.

/** A requirement's combined state: its analysis state together with its reviewed test evidence. */
export const COMBINED_STATES = [
	'verified-both',
	'verified-analysis',
	'verified-test',
	'failing',
	'pending',
	'not-covered'
] as const;
export type CombinedState = (typeof COMBINED_STATES)[number];

export const COMBINED_LABELS: Record<CombinedState, string> = {
	'verified-both': 'Verified by analysis and test',
	'verified-analysis': 'Verified by analysis only',
	'verified-test': 'Verified by test only',
	failing: 'Failing',
	pending: 'Pending re-run',
	'not-covered': 'Not covered'
};

/** A symbol per state, so the state never rests on colour alone. */
export const COMBINED_SYMBOLS: Record<CombinedState, string> = {
	'verified-both': '✔✔',
	'verified-analysis': '✔',
	'verified-test': '✔',
	failing: '✖',
	pending: '◷',
	'not-covered': '○'
};

/** Theme colour names (src/app.css) per state. */
export const COMBINED_TONES: Record<CombinedState, 'ok' | 'bad' | 'wait' | 'unsure'> = {
	'verified-both': 'ok',
	'verified-analysis': 'ok',
	'verified-test': 'ok',
	failing: 'bad',
	pending: 'wait',
	'not-covered': 'unsure'
};

export const ANALYSIS_STATES = [
	'verified',
	'failing',
	'pending',
	'inconclusive',
	'error',
	'not-analysed'
] as const;
export type AnalysisStateName = (typeof ANALYSIS_STATES)[number];

export const ANALYSIS_LABELS: Record<AnalysisStateName, string> = {
	verified: 'Verified by analysis',
	failing: 'Failing',
	pending: 'Pending re-run',
	inconclusive: 'Inconclusive',
	error: 'Engine error',
	'not-analysed': 'Not analysed'
};

/**
 * The combined state from the analysis state and the evidence: a failing or pending analysis decides;
 * otherwise a pass and accepted evidence each count as one leg of verification.
 */
export function combine(analysis: AnalysisStateName, acceptedEvidence: number): CombinedState {
	if (analysis === 'failing') return 'failing';
	if (analysis === 'pending') return 'pending';
	const byTest = acceptedEvidence > 0;
	if (analysis === 'verified') return byTest ? 'verified-both' : 'verified-analysis';
	return byTest ? 'verified-test' : 'not-covered';
}

export const OPEN_ITEM_LABELS = {
	tbd: 'TBD/TBR in the statement',
	pending: 'Analysis re-run pending',
	failing: 'Analysis failing',
	'analysis-error': 'Analysis ended in an engine error',
	inconclusive: 'Analysis inconclusive',
	rejected: 'Rejected evidence',
	unreviewed: 'Evidence awaiting review',
	'no-evidence': 'Test named as a method but no accepted evidence',
	'no-spec': 'Analysis named as a method but no stability specification'
} as const;
export type OpenItem = keyof typeof OPEN_ITEM_LABELS;

export const LEVEL_LABELS: Record<string, string> = {
	system: 'System',
	subsystem: 'Subsystem',
	loop: 'Loop'
};
