import { ENGINE_VERSION } from '../../stability/index';
import type { Db } from '../db';
import { sendRunJobs } from '../jobs/boss';

// Re-verification: every change that can move a verdict (a requirement revision, a specification edit,
// a model version, a new engine) queues analysis runs in the transaction of the change. A run is
// identified by (requirement, revision, specification, model version, engine version): queuing the same
// inputs twice inserts nothing and runs nothing twice.

export type TriggerKind = 'requirement-revision' | 'spec-edit' | 'model-publish' | 'engine-version';

export interface Trigger {
	kind: TriggerKind;
	/** Groups the runs of one change, e.g. "model-version:12"; notifications are aggregated by it. */
	ref?: string;
	userId?: number | null;
}

async function enqueueWhere(trx: Db, trigger: Trigger, where: string, bindings: unknown[]): Promise<number> {
	// The model version in force is the view requirement_inputs (its one definition).
	// Retired requirements are not re-verified.
	const r = await trx.raw(
		`insert into analysis_runs (project_id, requirement_id, requirement_revision, spec_id, model_version_id,
				model_hash, engine_version, trigger, trigger_ref, triggered_by)
			select r.project_id, r.id, r.current_revision, ri.spec_id, ri.model_version_id, ri.model_hash, ?, ?, ?, ?
			from requirements r
			join requirement_revisions rr on rr.requirement_id = r.id and rr.revision = r.current_revision
			join requirement_inputs ri on ri.requirement_id = r.id and ri.model_version_id is not null
			where rr.status <> 'retired' and (${where})
			order by r.id
			on conflict (requirement_id, requirement_revision, spec_id, model_version_id, engine_version) do nothing
			returning id`,
		[ENGINE_VERSION, trigger.kind, trigger.ref ?? null, trigger.userId ?? null, ...bindings] as never[]
	);
	const ids = (r.rows as { id: number }[]).map((x) => Number(x.id));
	await sendRunJobs(trx, ids);
	return ids.length;
}

/** Queue the run of one requirement's current inputs. Returns how many runs were queued (0 or 1). */
export async function enqueueForRequirement(
	trx: Db,
	requirementId: number,
	trigger: Trigger
): Promise<number> {
	return enqueueWhere(trx, trigger, 'r.id = ?', [requirementId]);
}

/**
 * Queue runs for every requirement whose current specification uses this model version: specs that
 * track the latest version (when this is the latest) and specs pinned to it.
 */
export async function enqueueForModelVersion(
	trx: Db,
	modelVersionId: number,
	trigger: Trigger
): Promise<number> {
	return enqueueWhere(
		trx,
		{ ref: `model-version:${modelVersionId}`, ...trigger },
		'ri.model_version_id = ?',
		[modelVersionId]
	);
}

/** Queue runs for every requirement of every project (a new engine version). */
export async function enqueueAll(trx: Db, trigger: Trigger): Promise<number> {
	return enqueueWhere(trx, trigger, 'true', []);
}
