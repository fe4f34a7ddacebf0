import { type AnalysisState, analysisStates } from '../analyses/state';
import type { Db } from '../db';
import { evidenceRepo } from './repo';

// A requirement's combined verification state: its analysis state (from the analyses module) together
// with its test evidence. Test counts as verifying a requirement only through the current revision of
// evidence that a certifier accepted; evidence waiting for review makes the requirement pending.

export type CombinedState =
	| 'verified-analysis-and-test'
	| 'verified-analysis-only'
	| 'verified-test-only'
	| 'failing'
	| 'pending'
	| 'not-covered';

export const COMBINED_LABELS: Record<CombinedState, { label: string; symbol: string }> = {
	'verified-analysis-and-test': { label: 'Verified by analysis and test', symbol: '✓✓' },
	'verified-analysis-only': { label: 'Verified by analysis only', symbol: '✓' },
	'verified-test-only': { label: 'Verified by test only', symbol: '✓' },
	failing: { label: 'Failing', symbol: '✕' },
	pending: { label: 'Pending', symbol: '…' },
	'not-covered': { label: 'Not covered', symbol: '○' }
};

export interface CombinedInfo {
	state: CombinedState;
	analysis: AnalysisState;
	evidence: { accepted: number; pending: number; rejected: number };
}

/** Pure rule, so it can be tested on its own. */
export function combine(analysis: AnalysisState, evidence: CombinedInfo['evidence']): CombinedState {
	if (analysis === 'failing') return 'failing';
	const byTest = evidence.accepted > 0;
	if (analysis === 'verified') return byTest ? 'verified-analysis-and-test' : 'verified-analysis-only';
	if (byTest) return 'verified-test-only';
	if (analysis === 'pending' || analysis === 'inconclusive' || analysis === 'error' || evidence.pending > 0)
		return 'pending';
	return 'not-covered';
}

export async function combinedStates(db: Db, requirementIds: number[]): Promise<Map<number, CombinedInfo>> {
	const ids = [...new Set(requirementIds.map(Number))].filter((n) => Number.isInteger(n) && n > 0);
	const out = new Map<number, CombinedInfo>();
	if (ids.length === 0) return out;
	const [analysis, rows] = await Promise.all([
		analysisStates(db, ids),
		evidenceRepo.currentForRequirements(db, ids)
	]);
	for (const id of ids) {
		const mine = rows.filter((r) => Number(r.requirement_id) === id);
		const evidence = {
			accepted: mine.filter((r) => r.decision === 'accepted').length,
			pending: mine.filter((r) => r.decision === null).length,
			rejected: mine.filter((r) => r.decision === 'rejected').length
		};
		const a = analysis.get(id)?.state ?? 'not-analysed';
		out.set(id, { state: combine(a, evidence), analysis: a, evidence });
	}
	return out;
}
