import { ENGINE_VERSION } from '../../stability/index';
import type { Db } from '../db';
import { sendRunJobs } from '../jobs/boss';
import { insertRuns } from './repo';

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
	const ids = await insertRuns(
		trx,
		{
			engineVersion: ENGINE_VERSION,
			trigger: trigger.kind,
			ref: trigger.ref ?? null,
			userId: trigger.userId ?? null
		},
		where,
		bindings
	);
	// One job per new run, in the same transaction: the queue only tells a worker that the run is due.
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
