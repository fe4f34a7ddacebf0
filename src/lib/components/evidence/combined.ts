// Display of the combined verification state (src/lib/server/evidence/state.ts): symbol, words, colour.
export type CombinedStateName =
	| 'verified-analysis-and-test'
	| 'verified-analysis-only'
	| 'verified-test-only'
	| 'failing'
	| 'pending'
	| 'not-covered';

export const COMBINED_LOOK: Record<CombinedStateName, { symbol: string; words: string; cls: string }> = {
	'verified-analysis-and-test': {
		symbol: '✓✓',
		words: 'verified by analysis and test',
		cls: 'border-ok bg-ok-soft text-ok'
	},
	'verified-analysis-only': {
		symbol: '✓·',
		words: 'verified by analysis only',
		cls: 'border-ok bg-white text-ok'
	},
	'verified-test-only': { symbol: '·✓', words: 'verified by test only', cls: 'border-ok bg-white text-ok' },
	failing: { symbol: '✕', words: 'failing', cls: 'border-bad bg-bad-soft text-bad' },
	pending: { symbol: '…', words: 'pending', cls: 'border-wait bg-wait-soft text-wait' },
	'not-covered': { symbol: '○', words: 'not covered', cls: 'border-rule bg-paper text-ink-soft' }
};
