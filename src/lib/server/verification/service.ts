import { ENGINE_VERSION } from '../../stability/index';
import {
	countEvidence,
	notApplicableOf,
	verificationStates,
	type AnalysisState,
	type EvidenceCounts,
	type NotApplicable,
	type RequirementFacts,
	type VerificationState
} from '../../verification/index';
import type { Db } from '../db';
import { facts, type FactsRow, type FactsScope } from './repo';

// Every requirement state a page, an export, a baseline, a mail or the API shows is read here: the
// bulk inputs from one SQL definition (./repo.ts), the rule from src/lib/verification.

export interface AnalysisStateInfo {
	state: AnalysisState;
	verdict?: string | null;
	runId?: number;
	finishedAt?: string | null;
	modelVersionId?: number;
	threshold?: number | null;
	notApplicable?: NotApplicable | null;
}

export interface RequirementVerification extends VerificationState {
	id: number;
	projectId: number;
	identifier: string;
	/** The current revision's status (a retired requirement is in no coverage count). */
	status: string;
	analysisInfo: AnalysisStateInfo;
	evidenceCounts: EvidenceCounts;
	/** The run of the current inputs (null: none yet). */
	currentRunId: number | null;
	pendingRuns: number;
}

function thresholdOf(t: unknown): number | null {
	if (typeof t === 'number') return t;
	if (t === 'Infinity') return Infinity;
	return null;
}

export function factsOf(r: FactsRow): RequirementFacts {
	return {
		id: Number(r.id),
		identifier: r.identifier,
		status: r.status,
		methods: r.methods ?? [],
		statement: r.statement ?? '',
		spec:
			r.spec_id === null
				? null
				: { id: Number(r.spec_id), check: r.check, requiredMargin: r.required_margin },
		modelVersionId: r.model_version_id === null ? null : Number(r.model_version_id),
		run:
			r.run_id === null
				? null
				: {
						id: Number(r.run_id),
						status: r.run_status,
						verdict: r.run_verdict,
						notApplicable: notApplicableOf({ notApplicable: r.not_applicable })
					},
		pendingRuns: Number(r.pending_runs ?? 0),
		latestEngineVersion: r.latest_engine_version,
		evidence: r.evidence ?? [],
		children: (r.children ?? []).map(Number),
		openFindings: r.open_findings ?? []
	};
}

function analysisInfo(r: FactsRow, f: RequirementFacts, state: AnalysisState): AnalysisStateInfo {
	if (state === 'not-analysed') return { state };
	const base: AnalysisStateInfo = {
		state,
		modelVersionId: Number(r.model_version_id),
		runId: r.run_id === null ? undefined : Number(r.run_id)
	};
	if (state === 'pending') return base;
	return {
		...base,
		verdict: r.run_verdict,
		finishedAt: r.run_finished_at ? new Date(r.run_finished_at).toISOString() : null,
		threshold: state === 'error' ? undefined : thresholdOf(r.run_threshold),
		notApplicable: f.run?.notApplicable ?? null
	};
}

/** The verification state of every requirement in the scope (a project, or some requirements). */
export async function verificationOf(
	db: Db,
	scope: FactsScope
): Promise<Map<number, RequirementVerification>> {
	const rows = await facts(db, scope, ENGINE_VERSION);
	const all = rows.map(factsOf);
	const states = verificationStates(all, ENGINE_VERSION);
	const out = new Map<number, RequirementVerification>();
	rows.forEach((r, i) => {
		const f = all[i];
		const s = states.get(f.id)!;
		out.set(f.id, {
			...s,
			id: f.id,
			projectId: Number(r.project_id),
			identifier: f.identifier,
			status: f.status,
			analysisInfo: analysisInfo(r, f, s.analysis),
			evidenceCounts: countEvidence(f.evidence),
			currentRunId: f.run?.id ?? null,
			pendingRuns: f.pendingRuns
		});
	});
	return out;
}

/** The analysis state of some requirements (the part of the verification state a run decides). */
export async function analysisStates(
	db: Db,
	requirementIds: number[]
): Promise<Map<number, AnalysisStateInfo>> {
	const v = await verificationOf(db, { requirementIds });
	const out = new Map<number, AnalysisStateInfo>();
	for (const id of requirementIds.map(Number)) {
		const s = v.get(id);
		out.set(id, s ? s.analysisInfo : { state: 'not-analysed' });
	}
	return out;
}
