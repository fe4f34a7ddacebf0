import { OPEN_FINDING_STATES } from '../../verification/findings';
import type { Db } from '../db';

// SQL only: the bulk inputs of the verification state, in one statement. The model version in force is
// the view requirement_inputs (migration 20261202100000); the run of the current inputs is the run of
// exactly (requirement, current revision, current specification, model version in force, engine version).
// The rule that turns these rows into a state is src/lib/verification (pure); nothing else decides it.

export interface FactsRow {
	id: number;
	project_id: number;
	identifier: string;
	number: number;
	status: string;
	methods: string[];
	statement: string;
	spec_id: number | null;
	check: unknown;
	required_margin: number | null;
	model_version_id: number | null;
	run_id: number | null;
	run_status: string | null;
	run_verdict: string | null;
	run_finished_at: Date | null;
	run_threshold: unknown;
	not_applicable: unknown;
	pending_runs: number;
	latest_engine_version: string | null;
	evidence: { method: string; decision: 'accepted' | 'rejected' | null }[] | null;
	children: number[] | null;
	open_findings: string[] | null;
}

/**
 * The scope: a project's requirements, or some requirements and everything derived from them (the
 * roll-up needs the whole subtree).
 */
export type FactsScope = { projectId: number } | { requirementIds: number[] };

const FACTS_SQL = `
with recursive scope(id) as (
	/*SCOPE*/
),
ids as (select distinct id from scope),
pend as (
	select ar.requirement_id, count(*)::int as n from analysis_runs ar
	where ar.requirement_id in (select id from ids) and ar.status in ('queued', 'running')
	group by ar.requirement_id
),
latest as (
	select distinct on (ar.requirement_id) ar.requirement_id, ar.engine_version
	from analysis_runs ar
	where ar.requirement_id in (select id from ids) and ar.status in ('done', 'error')
	order by ar.requirement_id, ar.finished_at desc nulls last, ar.id desc
),
ev as (
	select el.requirement_id,
		json_agg(json_build_object('method', ef.method, 'decision', er.decision) order by e.id) as items
	from evidence_links el
	join evidence_files ef on ef.id = el.evidence_file_id
	join evidence e on e.id = ef.evidence_id and e.current_revision = ef.revision
	left join evidence_reviews er on er.evidence_file_id = ef.id
	where el.requirement_id in (select id from ids)
	group by el.requirement_id
),
fnd as (
	select f.requirement_id, array_agg('F-' || f.number order by f.number) as labels from findings f
	where f.requirement_id in (select id from ids) and f.state = any(:openFindingStates::text[])
	group by f.requirement_id
),
kids as (
	select l.parent_id, array_agg(l.child_id order by l.child_id) as children
	from requirement_links l
	where l.removed_at is null and l.parent_id in (select id from ids)
	group by l.parent_id
)
select r.id, r.project_id, r.identifier, r.number, r.review_state as status, rr.methods, rr.statement,
	ri.spec_id, s."check", s.required_margin, ri.model_version_id,
	ar.id as run_id, ar.status as run_status, ar.verdict as run_verdict, ar.finished_at as run_finished_at,
	ar.result -> 'threshold' as run_threshold, ar.result -> 'notApplicable' as not_applicable,
	coalesce(pend.n, 0) as pending_runs, latest.engine_version as latest_engine_version,
	ev.items as evidence, kids.children, fnd.labels as open_findings
from ids
join requirements r on r.id = ids.id
join requirement_revisions rr on rr.requirement_id = r.id and rr.revision = r.current_revision
left join requirement_inputs ri on ri.requirement_id = r.id
left join stability_specs s on s.id = ri.spec_id
left join analysis_runs ar on ar.requirement_id = r.id and ar.requirement_revision = r.current_revision
	and ar.spec_id = ri.spec_id and ar.model_version_id = ri.model_version_id and ar.engine_version = :engine
left join pend on pend.requirement_id = r.id
left join latest on latest.requirement_id = r.id
left join ev on ev.requirement_id = r.id
left join kids on kids.parent_id = r.id
left join fnd on fnd.requirement_id = r.id
order by r.number
`;

export async function facts(db: Db, scope: FactsScope, engineVersion: string): Promise<FactsRow[]> {
	const bindings: Record<string, unknown> = {
		engine: engineVersion,
		openFindingStates: [...OPEN_FINDING_STATES]
	};
	let scopeSql: string;
	if ('projectId' in scope) {
		scopeSql = 'select id from requirements where project_id = :projectId';
		bindings.projectId = scope.projectId;
	} else {
		const ids = [...new Set(scope.requirementIds.map(Number))].filter((n) => Number.isInteger(n) && n > 0);
		if (ids.length === 0) return [];
		scopeSql = `select unnest(:ids::bigint[])
			union
			select l.child_id from requirement_links l join scope on l.parent_id = scope.id where l.removed_at is null`;
		bindings.ids = ids;
	}
	const r = await db.raw(FACTS_SQL.replace('/*SCOPE*/', scopeSql), bindings as never);
	return r.rows as FactsRow[];
}

/** The model version in force and its hash for one requirement (null: none). */
export async function inputsInForce(
	db: Db,
	requirementId: number
): Promise<{ spec_id: number; model_version_id: number | null; model_hash: string | null } | undefined> {
	return db('requirement_inputs')
		.where({ requirement_id: requirementId })
		.first('spec_id', 'model_version_id', 'model_hash');
}
