// How an analysis state and a verdict are shown: the words and symbols are those of
// src/lib/verification (the one definition); this module only adds the badge classes.
import {
	ANALYSIS_LOOK,
	TONE_CLASS,
	VERDICT_LOOK as VERDICT_WORDS,
	type AnalysisState
} from '../../verification/index';

export type AnalysisStateName = AnalysisState;

export const STATE_LOOK: Record<AnalysisStateName, { symbol: string; words: string; cls: string }> =
	Object.fromEntries(
		Object.entries(ANALYSIS_LOOK).map(([k, v]) => [
			k,
			{ symbol: v.symbol, words: v.label, cls: TONE_CLASS[v.tone] }
		])
	) as Record<AnalysisStateName, { symbol: string; words: string; cls: string }>;

const TEXT_CLASS = {
	ok: 'text-ok',
	bad: 'text-bad',
	wait: 'text-wait',
	unsure: 'text-unsure',
	none: 'text-ink-soft'
};
export const VERDICT_LOOK: Record<string, { symbol: string; words: string; cls: string }> =
	Object.fromEntries(
		Object.entries(VERDICT_WORDS).map(([k, v]) => [
			k,
			{ symbol: v.symbol, words: v.label, cls: TEXT_CLASS[v.tone] }
		])
	);

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
