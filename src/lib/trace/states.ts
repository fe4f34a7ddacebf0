// Words and symbols for the states the trace matrix, the exports and the coverage dashboard show.
// Shared by server and browser code: no imports.

/**
 * A requirement's combined state: its analysis state together with its reviewed test evidence. The
 * names, words, symbols and rule are those of src/lib/server/evidence/state.ts (combinedStates), repeated
 * here because that module is server-only; tests/integration/trace/matrix.test.ts checks they agree.
 */
export const COMBINED_STATES = [
	'verified-analysis-and-test',
	'verified-analysis-only',
	'verified-test-only',
	'failing',
	'pending',
	'not-covered'
] as const;
export type CombinedState = (typeof COMBINED_STATES)[number];

export const COMBINED_LABELS: Record<CombinedState, string> = {
	'verified-analysis-and-test': 'Verified by analysis and test',
	'verified-analysis-only': 'Verified by analysis only',
	'verified-test-only': 'Verified by test only',
	failing: 'Failing',
	pending: 'Pending',
	'not-covered': 'Not covered'
};

/** A symbol per state, so the state never rests on colour alone. */
export const COMBINED_SYMBOLS: Record<CombinedState, string> = {
	'verified-analysis-and-test': '✓✓',
	'verified-analysis-only': '✓',
	'verified-test-only': '✓',
	failing: '✕',
	pending: '…',
	'not-covered': '○'
};

/** Theme colour names (src/app.css) per state. */
export const COMBINED_TONES: Record<CombinedState, 'ok' | 'bad' | 'wait' | 'unsure'> = {
	'verified-analysis-and-test': 'ok',
	'verified-analysis-only': 'ok',
	'verified-test-only': 'ok',
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
 * The combined state: a failing analysis decides; a pass and accepted evidence each count as one leg
 * of verification; an analysis pending, inconclusive or in error, or evidence awaiting review, is
 * pending; otherwise not covered.
 */
export function combine(
	analysis: AnalysisStateName,
	evidence: { accepted: number; unreviewed: number }
): CombinedState {
	if (analysis === 'failing') return 'failing';
	const byTest = evidence.accepted > 0;
	if (analysis === 'verified') return byTest ? 'verified-analysis-and-test' : 'verified-analysis-only';
	if (byTest) return 'verified-test-only';
	if (
		analysis === 'pending' ||
		analysis === 'inconclusive' ||
		analysis === 'error' ||
		evidence.unreviewed > 0
	)
		return 'pending';
	return 'not-covered';
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
