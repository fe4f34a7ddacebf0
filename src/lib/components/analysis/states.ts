// How an analysis state is shown: a symbol and words, never colour alone.
export type AnalysisStateName =
	'verified' | 'failing' | 'pending' | 'inconclusive' | 'error' | 'not-analysed';

export const STATE_LOOK: Record<AnalysisStateName, { symbol: string; words: string; cls: string }> = {
	verified: { symbol: '✓', words: 'Verified by analysis', cls: 'border-ok bg-ok-soft text-ok' },
	failing: { symbol: '✕', words: 'Failing', cls: 'border-bad bg-bad-soft text-bad' },
	pending: { symbol: '◌', words: 'Pending re-run', cls: 'border-wait bg-wait-soft text-wait' },
	inconclusive: { symbol: '?', words: 'Inconclusive', cls: 'border-unsure bg-unsure-soft text-unsure' },
	error: { symbol: '!', words: 'Analysis error', cls: 'border-bad bg-white text-bad' },
	'not-analysed': { symbol: '–', words: 'Not analysed', cls: 'border-rule bg-paper text-ink-soft' }
};

export const VERDICT_LOOK: Record<string, { symbol: string; words: string; cls: string }> = {
	pass: { symbol: '✓', words: 'pass', cls: 'text-ok' },
	fail: { symbol: '✕', words: 'fail', cls: 'text-bad' },
	inconclusive: { symbol: '?', words: 'inconclusive', cls: 'text-unsure' }
};

/** A number from a result under the engine's Infinity convention. */
export function fmtNum(v: unknown, digits = 5): string {
	if (v === 'Infinity' || v === Infinity) return '∞';
	if (v === '-Infinity' || v === -Infinity) return '−∞';
	if (typeof v !== 'number' || !Number.isFinite(v)) return '—';
	return Number(v.toPrecision(digits)).toString();
}

export function describeCheck(c: Record<string, unknown> | null | undefined): string {
	if (!c) return '—';
	const s = c.sector as [unknown, unknown] | undefined;
	switch (c.type) {
		case 'circle':
			return `circle criterion, sector [${fmtNum(s?.[0])}, ${s?.[1] === null ? '∞' : fmtNum(s?.[1])}]`;
		case 'popov':
			return `Popov criterion, sector [0, ${fmtNum(s?.[1])}]`;
		case 'positive-real':
			return 'positive realness';
		case 'max-sector':
			return `largest sector with lower bound ${fmtNum(c.lower)}`;
		case 'margins':
			return `classical margins (gain ≥ ${fmtNum(c.minGainMarginDb)} dB, phase ≥ ${fmtNum(c.minPhaseMarginDeg)}°)`;
		default:
			return String(c.type ?? '—');
	}
}
