import type { Knex } from 'knex';
import type { Db } from '../db';
import type { MatrixQuery } from './schema';

// SQL only. The trace matrix is one set-based query over the whole project (no per-row queries): the
// current revision, the model version in force (the view requirement_inputs), the latest finished run
// and parent/child identifiers are each one grouped sub-query joined by requirement. The verification
// state is not decided here: the service computes it (src/lib/server/verification) and passes, for the
// requirements that pass the state filter, each one's rank in the state order, which this query joins
// to filter and sort.

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
	state_rank: number;
	last_change: Date;
	total: number;
}

const SORTS: Record<string, string> = {
	identifier: 'number',
	title: 'lower(title)',
	level: "array_position(array['system','subsystem','loop'], level)",
	assurance: 'assurance_level',
	state: 'state_rank',
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
		rr.title, rr.level, rr.assurance_level, rr.methods, r.review_state as status, rr.owner_id, u.display_name as owner_name,
		rr.created_at as revised_at, st.state_rank
	from requirements r
	join unnest(:stateIds::bigint[], :stateRanks::int[]) as st(id, state_rank) on st.id = r.id
	join requirement_revisions rr on rr.requirement_id = r.id and rr.revision = r.current_revision
	left join users u on u.id = rr.owner_id
	where r.project_id = :projectId /*CUR_FILTERS*/
),
latest as (
	select distinct on (ar.requirement_id) ar.requirement_id, ar.id, ar.finished_at
	from analysis_runs ar
	where ar.project_id = :projectId and ar.status in ('done', 'error') and ar.requirement_id in (select id from cur)
	order by ar.requirement_id, ar.finished_at desc nulls last, ar.id desc
),
ev as (
	select el.requirement_id, max(greatest(ef.uploaded_at, er.reviewed_at)) as last_at
	from evidence e
	join evidence_files ef on ef.evidence_id = e.id and ef.revision = e.current_revision
	join evidence_links el on el.evidence_file_id = ef.id
	left join evidence_reviews er on er.evidence_file_id = ef.id
	where e.project_id = :projectId
	group by el.requirement_id
),
stated as (
	select c.*, ri.spec_id, ri.model_id, ri.model_version_id,
		lt.id as latest_run_id,
		greatest(c.updated_at, c.revised_at, lt.finished_at, ev.last_at) as last_change
	from cur c
	left join requirement_inputs ri on ri.requirement_id = c.id
	left join latest lt on lt.requirement_id = c.id
	left join ev on ev.requirement_id = c.id
),
page as (
	select *, count(*) over ()::int as total from stated /*ORDER*/ /*LIMIT*/
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
	offset: number,
	states: { ids: number[]; ranks: number[] }
): Promise<MatrixDbRow[]> {
	const { sql, b } = matrixStatement(projectId, q, limit, offset, states);
	// A page is one statement (prepared by the pool, see db.ts); the whole matrix (exports, baselines)
	// gets room for its sorts in memory, in its own transaction.
	if (limit !== null) return (await db.raw(sql, b as never)).rows as MatrixDbRow[];
	const run = async (trx: Db) => {
		await trx.raw("set local work_mem = '32MB'");
		return (await trx.raw(sql, b as never)).rows as MatrixDbRow[];
	};
	return (db as { isTransaction?: boolean }).isTransaction ? run(db) : (db as Knex).transaction(run);
}

/**
 * The whole matrix from a cursor (pg-query-stream through Knex), a few hundred rows at a time: for the
 * exports, which write each row and forget it. Call inside a transaction (the snapshot's).
 */
export async function* matrixCursor(
	trx: Knex.Transaction,
	projectId: number,
	q: MatrixQuery,
	states: { ids: number[]; ranks: number[] }
): AsyncGenerator<MatrixDbRow> {
	const { sql, b } = matrixStatement(projectId, q, null, 0, states);
	await trx.raw("set local work_mem = '32MB'");
	yield* trx
		.raw(sql, b as never)
		.stream({ batchSize: 250, highWaterMark: 250 }) as AsyncIterable<MatrixDbRow>;
}

/** Every evidence item's current revision from a cursor (see matrixCursor). */
export function evidenceCursor(trx: Knex.Transaction, projectId: number): AsyncIterable<EvidenceDbRow> {
	return trx
		.raw(EVIDENCE_SQL, [projectId])
		.stream({ batchSize: 250, highWaterMark: 250 }) as AsyncIterable<EvidenceDbRow>;
}

function matrixStatement(
	projectId: number,
	q: MatrixQuery,
	limit: number | null,
	offset: number,
	states: { ids: number[]; ranks: number[] }
) {
	const curWhere: string[] = [];
	const b: Record<string, unknown> = { projectId, stateIds: states.ids, stateRanks: states.ranks };
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
		.replace('/*ORDER*/', order)
		.replace(
			'/*ORDER*/',
			order.replace(/\b(number|title|level|assurance_level|state_rank|owner_name|last_change)\b/g, 'p.$1')
		)
		.replace('/*LIMIT*/', limit !== null ? 'limit :limit offset :offset' : '');
	if (limit !== null) {
		b.limit = limit;
		b.offset = offset;
	}
	return { sql, b };
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
	return (await db.raw(EVIDENCE_SQL, [projectId])).rows;
}

const EVIDENCE_SQL = `select e.id as evidence_id, ef.revision, ef.id as file_id, ef.title, ef.kind, ef.method, ef.original_name,
			ef.size_bytes, ef.sha256, ef.uploaded_by_label, ef.uploaded_at, er.decision, er.comment, er.reviewer_label,
			er.reviewed_at,
			coalesce((select array_agg(rq.identifier order by rq.number) from evidence_links el
				join requirements rq on rq.id = el.requirement_id where el.evidence_file_id = ef.id), '{}') as requirements
		from evidence e
		join evidence_files ef on ef.evidence_id = e.id and ef.revision = e.current_revision
		left join evidence_reviews er on er.evidence_file_id = ef.id
		where e.project_id = ?
		order by e.id`;

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
