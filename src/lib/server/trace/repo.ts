import { ENGINE_VERSION } from '../../stability/index';
import type { Knex } from 'knex';
import type { Db } from '../db';
import type { MatrixQuery } from './schema';

// SQL only. The trace matrix is one set-based query over the whole project (no per-row queries):
// the current revision, the model version in force, the run of the current inputs, the latest finished
// run, evidence counts and parent/child identifiers are each one grouped sub-query joined by requirement.
// The analysis state mirrors src/lib/server/analyses/state.ts (analysisStates) and the combined state
// mirrors combine() in src/lib/trace/states.ts; tests compare both.

export interface MatrixDbRow {
	id: number;
	number: number;
	identifier: string;
	revision: number;
	content_hash: string;
	title: string;
	statement: string;
	rationale: string;
	level: string;
	assurance_level: string;
	methods: string[];
	status: string;
	owner_id: number | null;
	owner_name: string | null;
	parents: string[] | null;
	children: string[] | null;
	spec_id: number | null;
	spec_version: number | null;
	spec_hash: string | null;
	check: Record<string, unknown> | null;
	required_margin: number | null;
	model_id: number | null;
	model_name: string | null;
	model_version_id: number | null;
	model_version: number | null;
	model_hash: string | null;
	analysis_state: string;
	current_run_id: number | null;
	latest_run_id: number | null;
	latest_status: string | null;
	latest_verdict: string | null;
	latest_result: Record<string, unknown> | null;
	latest_worst_point: string | null;
	latest_finished_at: Date | null;
	latest_output_hash: string | null;
	latest_engine_version: string | null;
	latest_model_version_id: number | null;
	latest_model_version: number | null;
	latest_model_hash: string | null;
	latest_spec_id: number | null;
	latest_spec_version: number | null;
	latest_spec_check: Record<string, unknown> | null;
	latest_requirement_revision: number | null;
	pending_runs: number;
	evidence_count: number;
	evidence_accepted: number;
	evidence_rejected: number;
	evidence_unreviewed: number;
	has_tbx: boolean;
	combined_state: string;
	last_change: Date;
	total: number;
}

const SORTS: Record<string, string> = {
	identifier: 'number',
	title: 'lower(title)',
	level: "array_position(array['system','subsystem','loop'], level)",
	assurance: 'assurance_level',
	state:
		"array_position(array['failing','pending','not-covered','verified-test-only','verified-analysis-only','verified-analysis-and-test'], combined_state)",
	owner: 'lower(owner_name)',
	lastChange: 'last_change'
};

function escapeLike(s: string): string {
	return `%${s.replace(/[\\%_]/g, (c) => '\\' + c)}%`;
}

// Slim rows first (ids, short columns, counts): filtered, sorted and paged; the wide columns
// (statement, rationale, specification and run results) are joined only for the rows returned.
const MATRIX_SQL = `
with cur as materialized (
	select r.id, r.number, r.identifier, r.current_revision as revision, r.current_spec_id, r.updated_at,
		rr.title, rr.level, rr.assurance_level, rr.methods, rr.status, rr.owner_id, u.display_name as owner_name,
		rr.created_at as revised_at, (rr.statement ~ '\\mTB[DR]\\M') as has_tbx
	from requirements r
	join requirement_revisions rr on rr.requirement_id = r.id and rr.revision = r.current_revision
	left join users u on u.id = rr.owner_id
	where r.project_id = :projectId /*CUR_FILTERS*/
),
inforce as (
	select c.id, s.id as spec_id, m.id as model_id, mv.id as model_version_id, ar.id as run_id,
		ar.status as run_status, ar.verdict as run_verdict
	from cur c
	join stability_specs s on s.id = c.current_spec_id
	join models m on m.id = s.model_id
	left join model_versions mv on mv.model_id = m.id
		and (case when s.model_version_id is null then mv.version = m.latest_version else mv.id = s.model_version_id end)
	left join analysis_runs ar on ar.requirement_id = c.id and ar.requirement_revision = c.revision
		and ar.spec_id = s.id and ar.model_version_id = mv.id and ar.engine_version = :engine
),
latest as (
	select distinct on (ar.requirement_id) ar.requirement_id, ar.id, ar.finished_at
	from analysis_runs ar
	where ar.project_id = :projectId and ar.status in ('done', 'error') and ar.requirement_id in (select id from cur)
	order by ar.requirement_id, ar.finished_at desc nulls last, ar.id desc
),
pend as (
	select requirement_id, count(*)::int as n from analysis_runs
	where project_id = :projectId and status in ('queued', 'running') group by requirement_id
),
ev as (
	select el.requirement_id, count(*)::int as n,
		(count(*) filter (where er.decision = 'accepted'))::int as accepted,
		(count(*) filter (where er.decision = 'rejected'))::int as rejected,
		(count(*) filter (where er.id is null))::int as unreviewed,
		max(greatest(ef.uploaded_at, er.reviewed_at)) as last_at
	from evidence e
	join evidence_files ef on ef.evidence_id = e.id and ef.revision = e.current_revision
	join evidence_links el on el.evidence_file_id = ef.id
	left join evidence_reviews er on er.evidence_file_id = ef.id
	where e.project_id = :projectId
	group by el.requirement_id
),
stated as (
	select j.*,
		case
			when analysis_state = 'failing' then 'failing'
			when analysis_state = 'verified' and evidence_accepted > 0 then 'verified-analysis-and-test'
			when analysis_state = 'verified' then 'verified-analysis-only'
			when evidence_accepted > 0 then 'verified-test-only'
			when analysis_state in ('pending', 'inconclusive', 'error') or evidence_unreviewed > 0 then 'pending'
			else 'not-covered'
		end as combined_state
	from (
		select c.*, i.spec_id, i.model_id, i.model_version_id, i.run_id as current_run_id,
			case
				when i.spec_id is null or i.model_version_id is null then 'not-analysed'
				when i.run_id is null or i.run_status in ('queued', 'running') then 'pending'
				when i.run_status = 'error' then 'error'
				when i.run_verdict = 'pass' then 'verified'
				when i.run_verdict = 'fail' then 'failing'
				when i.run_verdict = 'inconclusive' then 'inconclusive'
				else 'error'
			end as analysis_state,
			lt.id as latest_run_id,
			coalesce(pend.n, 0) as pending_runs,
			coalesce(ev.n, 0) as evidence_count, coalesce(ev.accepted, 0) as evidence_accepted,
			coalesce(ev.rejected, 0) as evidence_rejected, coalesce(ev.unreviewed, 0) as evidence_unreviewed,
			greatest(c.updated_at, c.revised_at, lt.finished_at, ev.last_at) as last_change
		from cur c
		left join inforce i on i.id = c.id
		left join latest lt on lt.requirement_id = c.id
		left join pend on pend.requirement_id = c.id
		left join ev on ev.requirement_id = c.id
	) j
),
page as (
	select *, count(*) over ()::int as total from stated /*WHERE*/ /*ORDER*/ /*LIMIT*/
)
select p.*, rr.statement, rr.rationale, rr.content_hash,
	-- Per row through the link indexes: a grouped sub-query here was aggregated once per page row.
	(select array_agg(x.identifier order by x.number) from requirement_links l join requirements x on x.id = l.parent_id
		where l.removed_at is null and l.child_id = p.id) as parents,
	(select array_agg(x.identifier order by x.number) from requirement_links l join requirements x on x.id = l.child_id
		where l.removed_at is null and l.parent_id = p.id) as children,
	s.version as spec_version, s.content_hash as spec_hash, s."check", s.required_margin,
	m.name as model_name, mv.version as model_version, mv.content_hash as model_hash,
	lt.status as latest_status, lt.verdict as latest_verdict, lt.result as latest_result, lt.worst_point as latest_worst_point,
	lt.finished_at as latest_finished_at, lt.output_hash as latest_output_hash, lt.engine_version as latest_engine_version,
	lt.model_version_id as latest_model_version_id, lmv.version as latest_model_version, lt.model_hash as latest_model_hash,
	lt.spec_id as latest_spec_id, ls.version as latest_spec_version, ls."check" as latest_spec_check,
	lt.requirement_revision as latest_requirement_revision
from page p
join requirement_revisions rr on rr.requirement_id = p.id and rr.revision = p.revision
left join stability_specs s on s.id = p.spec_id
left join models m on m.id = p.model_id
left join model_versions mv on mv.id = p.model_version_id
left join analysis_runs lt on lt.id = p.latest_run_id
left join model_versions lmv on lmv.id = lt.model_version_id
left join stability_specs ls on ls.id = lt.spec_id
/*ORDER*/
`;

/** One page (or, with limit null, all) of the matrix, filtered and sorted in the database. */
export async function matrix(
	db: Db,
	projectId: number,
	q: MatrixQuery,
	limit: number | null,
	offset = 0
): Promise<MatrixDbRow[]> {
	const where: string[] = [];
	const curWhere: string[] = [];
	const b: Record<string, unknown> = { projectId, engine: ENGINE_VERSION };
	if (q.state?.length) {
		where.push('combined_state = any(:states::text[])');
		b.states = q.state;
	}
	if (q.level) {
		curWhere.push('rr.level = :level');
		b.level = q.level;
	}
	if (q.assurance) {
		curWhere.push('rr.assurance_level = :assurance');
		b.assurance = q.assurance;
	}
	if (q.method) {
		curWhere.push(':method = any(rr.methods)');
		b.method = q.method;
	}
	if (q.owner) {
		curWhere.push('rr.owner_id = :owner');
		b.owner = q.owner;
	}
	if (q.q) {
		curWhere.push('(r.identifier ilike :like or rr.title ilike :like or rr.statement ilike :like)');
		b.like = escapeLike(q.q);
	}
	const sort = SORTS[q.sort] ?? 'number';
	const dir = q.dir === 'desc' ? 'desc' : 'asc';
	const order = `order by ${sort} ${dir} nulls last, number ${dir}`;
	const sql = MATRIX_SQL.replace('/*CUR_FILTERS*/', curWhere.map((w) => 'and ' + w).join(' '))
		.replace('/*WHERE*/', where.length ? 'where ' + where.join(' and ') : '')
		.replace('/*ORDER*/', order)
		.replace(
			'/*ORDER*/',
			order.replace(/\b(number|title|level|assurance_level|combined_state|owner_name|last_change)\b/g, 'p.$1')
		)
		.replace('/*LIMIT*/', limit !== null ? 'limit :limit offset :offset' : '');
	if (limit !== null) {
		b.limit = limit;
		b.offset = offset;
	}
	// A page is one statement (prepared by the pool, see db.ts); the whole matrix (exports, baselines)
	// gets room for its sorts in memory, in its own transaction.
	if (limit !== null) return (await db.raw(sql, b as never)).rows as MatrixDbRow[];
	const run = async (trx: Db) => {
		await trx.raw("set local work_mem = '32MB'");
		return (await trx.raw(sql, b as never)).rows as MatrixDbRow[];
	};
	return (db as { isTransaction?: boolean }).isTransaction ? run(db) : (db as Knex).transaction(run);
}

/** The owners who appear in a project's requirements (for the owner filter). */
export async function owners(db: Db, projectId: number): Promise<{ id: number; name: string }[]> {
	const r = await db.raw(
		`select distinct u.id, u.display_name as name
		from requirements r
		join requirement_revisions rr on rr.requirement_id = r.id and rr.revision = r.current_revision
		join users u on u.id = rr.owner_id
		where r.project_id = ? order by u.display_name`,
		[projectId]
	);
	return r.rows;
}

export interface EvidenceDbRow {
	evidence_id: number;
	revision: number;
	file_id: number;
	title: string;
	kind: string;
	method: string;
	original_name: string;
	size_bytes: number;
	sha256: string;
	uploaded_by_label: string;
	uploaded_at: Date;
	decision: string | null;
	comment: string | null;
	reviewer_label: string | null;
	reviewed_at: Date | null;
	requirements: string[];
}

/** Every evidence item's current revision, with its review and the requirements it verifies. */
export async function evidence(db: Db, projectId: number): Promise<EvidenceDbRow[]> {
	const r = await db.raw(
		`select e.id as evidence_id, ef.revision, ef.id as file_id, ef.title, ef.kind, ef.method, ef.original_name,
			ef.size_bytes, ef.sha256, ef.uploaded_by_label, ef.uploaded_at, er.decision, er.comment, er.reviewer_label,
			er.reviewed_at,
			coalesce((select array_agg(rq.identifier order by rq.number) from evidence_links el
				join requirements rq on rq.id = el.requirement_id where el.evidence_file_id = ef.id), '{}') as requirements
		from evidence e
		join evidence_files ef on ef.evidence_id = e.id and ef.revision = e.current_revision
		left join evidence_reviews er on er.evidence_file_id = ef.id
		where e.project_id = ?
		order by e.id`,
		[projectId]
	);
	return r.rows;
}

/** Active trace links of a project (child derived from parent), by identifier. */
export async function links(
	db: Db,
	projectId: number
): Promise<{ child: string; parent: string; child_revision: number; parent_revision: number }[]> {
	const r = await db.raw(
		`select ch.identifier as child, p.identifier as parent, l.child_revision, l.parent_revision
		from requirement_links l
		join requirements ch on ch.id = l.child_id
		join requirements p on p.id = l.parent_id
		where l.removed_at is null and ch.project_id = ?
		order by ch.number, p.number`,
		[projectId]
	);
	return r.rows;
}

/** Every model version of a project. */
export async function modelVersions(
	db: Db,
	projectId: number
): Promise<{ id: number; model: string; version: number; content_hash: string; created_at: Date }[]> {
	const r = await db.raw(
		`select mv.id, m.name as model, mv.version, mv.content_hash, mv.created_at
		from model_versions mv join models m on m.id = mv.model_id
		where m.project_id = ? order by m.name, mv.version`,
		[projectId]
	);
	return r.rows;
}

export async function projectById(
	db: Db,
	id: number
): Promise<{ id: number; key: string; name: string } | undefined> {
	return db('projects').where({ id }).first('id', 'key', 'name');
}
