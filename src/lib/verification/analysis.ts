// A requirement's analysis state: what the run of its current inputs (revision, specification, model
// version in force, this engine version) says. The bulk inputs come from one SQL definition
// (src/lib/server/verification/repo.ts); this module turns them into a state and words.

export const ANALYSIS_STATES = [
	'verified',
	'not-proved',
	'not-applicable',
	'inconclusive',
	'error',
	'pending',
	'not-analysed'
] as const;
export type AnalysisState = (typeof ANALYSIS_STATES)[number];

export type Tone = 'ok' | 'bad' | 'wait' | 'unsure' | 'none';

/** Symbol, words and tone per analysis state: a state never rests on colour alone. */
export const ANALYSIS_LOOK: Record<AnalysisState, { symbol: string; label: string; tone: Tone }> = {
	verified: { symbol: '✓', label: 'Verified by analysis', tone: 'ok' },
	'not-proved': { symbol: '✕', label: 'Not proved', tone: 'bad' },
	'not-applicable': { symbol: '⊘', label: 'Criterion not applicable', tone: 'bad' },
	inconclusive: { symbol: '?', label: 'Inconclusive', tone: 'unsure' },
	error: { symbol: '!', label: 'Analysis error', tone: 'bad' },
	pending: { symbol: '◌', label: 'Pending run', tone: 'wait' },
	'not-analysed': { symbol: '–', label: 'Not analysed', tone: 'none' }
};

/** Words for a verdict of one run (history rows, model version pages). */
export const VERDICT_LOOK: Record<string, { symbol: string; label: string; tone: Tone }> = {
	pass: { symbol: '✓', label: 'pass', tone: 'ok' },
	fail: { symbol: '✕', label: 'not proved', tone: 'bad' },
	inconclusive: { symbol: '?', label: 'inconclusive', tone: 'unsure' }
};

/**
 * Why a criterion does not apply, as the engine marked it in the run's result (`notApplicable`):
 * the precondition that failed and what would make the criterion applicable.
 */
export interface NotApplicable {
	precondition: string;
	remedy: string;
	point?: string | null;
}

export interface RunFacts {
	status: string | null;
	verdict: string | null;
	notApplicable?: NotApplicable | null;
}

/**
 * The state from the inputs: no specification or no model version in force is "not analysed"; no run
 * of the current inputs yet, or one queued or running, is "pending"; an engine error is "error"; a
 * verdict that is not a pass is "criterion not applicable" when the engine marked a failed precondition
 * (the result's notApplicable), otherwise a fail is "not proved" (the criterion is sufficient, not
 * necessary: neither is a proof of instability).
 */
export function analysisStateOf(i: {
	specId: number | null;
	modelVersionId: number | null;
	run: RunFacts | null;
}): AnalysisState {
	if (i.specId === null || i.modelVersionId === null) return 'not-analysed';
	const run = i.run;
	if (!run || run.status === null || run.status === 'queued' || run.status === 'running') return 'pending';
	if (run.status === 'error') return 'error';
	if (run.verdict === 'pass') return 'verified';
	if ((run.verdict === 'fail' || run.verdict === 'inconclusive') && run.notApplicable)
		return 'not-applicable';
	if (run.verdict === 'fail') return 'not-proved';
	if (run.verdict === 'inconclusive') return 'inconclusive';
	return 'error';
}

/** The marker the engine's result carries when a precondition failed (null when none). */
export function notApplicableOf(result: unknown): NotApplicable | null {
	const na = (result as { notApplicable?: unknown } | null | undefined)?.notApplicable;
	if (!na || typeof na !== 'object') return null;
	const { precondition, remedy, point } = na as Record<string, unknown>;
	if (typeof precondition !== 'string') return null;
	return {
		precondition,
		remedy: typeof remedy === 'string' ? remedy : '',
		point: typeof point === 'string' ? point : null
	};
}
