import { ENGINE_VERSION } from '../../stability/index';
import type { Db } from '../db';
import { stateRows } from './repo';

// A requirement's analysis state, from its current inputs (current revision x current specification x
// model version in force x this engine version) and the run of exactly those inputs.

export type AnalysisState = 'verified' | 'failing' | 'pending' | 'inconclusive' | 'error' | 'not-analysed';

export interface AnalysisStateInfo {
	state: AnalysisState;
	verdict?: string | null;
	runId?: number;
	finishedAt?: string | null;
	modelVersionId?: number;
	threshold?: number | null;
}

function thresholdOf(result: unknown): number | null {
	const t = (result as { threshold?: unknown } | null)?.threshold;
	if (typeof t === 'number') return t;
	if (t === 'Infinity') return Infinity;
	return null;
}

const fromVerdict: Record<string, AnalysisState> = {
	pass: 'verified',
	fail: 'failing',
	inconclusive: 'inconclusive'
};

export async function analysisStates(
	db: Db,
	requirementIds: number[]
): Promise<Map<number, AnalysisStateInfo>> {
	const out = new Map<number, AnalysisStateInfo>();
	const ids = [...new Set(requirementIds.map(Number))].filter((n) => Number.isInteger(n));
	if (ids.length === 0) return out;
	const rows = await stateRows(db, ids, ENGINE_VERSION);
	for (const r of rows) {
		const id = Number(r.id);
		if (r.spec_id == null || r.mv_id == null) {
			out.set(id, { state: 'not-analysed' });
			continue;
		}
		const base = { modelVersionId: Number(r.mv_id), runId: r.run_id == null ? undefined : Number(r.run_id) };
		if (r.run_id == null || r.status === 'queued' || r.status === 'running') {
			out.set(id, { ...base, state: 'pending' });
		} else if (r.status === 'error') {
			out.set(id, {
				...base,
				state: 'error',
				verdict: null,
				finishedAt: r.finished_at ? new Date(r.finished_at).toISOString() : null
			});
		} else {
			out.set(id, {
				...base,
				state: fromVerdict[r.verdict ?? ''] ?? 'error',
				verdict: r.verdict,
				finishedAt: r.finished_at ? new Date(r.finished_at).toISOString() : null,
				threshold: thresholdOf(r.result)
			});
		}
	}
	for (const id of ids) if (!out.has(id)) out.set(id, { state: 'not-analysed' });
	return out;
}
