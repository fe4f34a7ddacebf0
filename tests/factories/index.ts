import knexFactory, { type Knex } from 'knex';
import { hashPassword } from '../../src/lib/server/passwords';
import type { Role } from '../../src/lib/server/identity/roles';
import { env } from '../helpers/env';

// Data factories for integration and browser tests: they write straight to the test database.
let instance: Knex | undefined;
export function testDb(): Knex {
	instance ??= knexFactory({ client: 'pg', connection: env.databaseUrl, pool: { min: 0, max: 4 } });
	return instance;
}
export async function closeTestDb() {
	await instance?.destroy();
	instance = undefined;
}

let seq = 0;
export function unique(prefix = 'x'): string {
	return `${prefix}${Date.now().toString(36)}${(++seq).toString(36)}${Math.floor(Math.random() * 1e4)}`;
}

export const PASSWORD = 'correct-horse-battery';
let cachedHash: Promise<string> | undefined;

export async function createUser(
	opts: { email?: string; name?: string; admin?: boolean; disabled?: boolean } = {}
) {
	cachedHash ??= hashPassword(PASSWORD);
	const email = opts.email ?? `${unique('u')}@example.test`;
	const [u] = await testDb()('users')
		.insert({
			email,
			display_name: opts.name ?? 'Test Person',
			password_hash: await cachedHash,
			site_admin: opts.admin ?? false,
			disabled: opts.disabled ?? false
		})
		.returning('*');
	return { ...u, password: PASSWORD } as {
		id: number;
		email: string;
		password: string;
		display_name: string;
	};
}

export async function createProject(opts: { key?: string; name?: string } = {}) {
	const key =
		opts.key ??
		'T' +
			Math.random()
				.toString(36)
				.slice(2, 8)
				.toUpperCase()
				.replace(/[^A-Z0-9]/g, 'Q');
	const [p] = await testDb()('projects')
		.insert({ key, name: opts.name ?? `Project ${key}`, description: 'test project' })
		.returning('*');
	return p as { id: number; key: string; name: string };
}

export async function addMember(userId: number, projectId: number, role: Role) {
	await testDb()('memberships').insert({ user_id: userId, project_id: projectId, role });
}

/** A project with one member per role, an admin and an outsider (member of another project). */
export async function createTeam() {
	const project = await createProject();
	const other = await createProject();
	const users = {
		engineer: await createUser({ name: 'Eng' }),
		analyst: await createUser({ name: 'Ana' }),
		certifier: await createUser({ name: 'Cert' }),
		viewer: await createUser({ name: 'View' }),
		admin: await createUser({ name: 'Admin', admin: true }),
		outsider: await createUser({ name: 'Out' })
	};
	await addMember(users.engineer.id, project.id, 'engineer');
	await addMember(users.analyst.id, project.id, 'analyst');
	await addMember(users.certifier.id, project.id, 'certifier');
	await addMember(users.viewer.id, project.id, 'viewer');
	await addMember(users.outsider.id, other.id, 'engineer');
	return { project, other, users };
}

// --- Requirements, models, analysis runs and evidence (direct inserts, for the trace matrix tests) ---

import { createHash } from 'node:crypto';

const sha = (s: string) => createHash('sha256').update(s).digest('hex');

export interface RequirementOpts {
	title?: string;
	statement?: string;
	rationale?: string;
	level?: 'system' | 'subsystem' | 'loop';
	assurance?: 'A' | 'B' | 'C' | 'D' | 'E';
	methods?: string[];
	ownerId?: number | null;
	status?: 'draft' | 'in-review' | 'approved' | 'retired';
}

/** A requirement with its first revision; the identifier is "<project key>-<n>". */
export async function createRequirement(projectId: number, o: RequirementOpts = {}) {
	const db = testDb();
	return db.transaction(async (trx) => {
		const p = await trx('projects')
			.where({ id: projectId })
			.forUpdate()
			.first('key', 'next_requirement_number');
		const number = Number(p.next_requirement_number);
		await trx('projects')
			.where({ id: projectId })
			.update({ next_requirement_number: number + 1 });
		const identifier = `${p.key}-${String(number).padStart(3, '0')}`;
		const [req] = await trx('requirements')
			.insert({ project_id: projectId, number, identifier })
			.returning('*');
		const rev = revisionRow(req.id, 1, o);
		await trx('requirement_revisions').insert(rev);
		return { ...rev, id: Number(req.id), identifier, number };
	});
}

function revisionRow(requirementId: number, revision: number, o: RequirementOpts) {
	const row = {
		requirement_id: requirementId,
		revision,
		title: o.title ?? `Requirement ${requirementId}`,
		statement:
			o.statement ?? 'The loop shall remain absolutely stable for every gain in the sector [0.5, 2].',
		rationale: o.rationale ?? 'Actuator gain varies with temperature.',
		level: o.level ?? 'loop',
		assurance_level: o.assurance ?? 'B',
		methods: o.methods ?? ['analysis'],
		owner_id: o.ownerId ?? null,
		status: o.status ?? 'approved'
	};
	return { ...row, content_hash: sha(JSON.stringify(row)) };
}

/** A new revision of a requirement (only the given fields change). */
export async function reviseRequirement(requirementId: number, o: RequirementOpts) {
	const db = testDb();
	const cur = await db('requirements as r')
		.join('requirement_revisions as v', function () {
			this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
		})
		.where('r.id', requirementId)
		.first('v.*');
	const next = cur.revision + 1;
	const rev = revisionRow(requirementId, next, {
		title: cur.title,
		statement: cur.statement,
		rationale: cur.rationale,
		level: cur.level,
		assurance: cur.assurance_level,
		methods: cur.methods,
		ownerId: cur.owner_id,
		status: cur.status,
		...o
	});
	await db('requirement_revisions').insert(rev);
	await db('requirements')
		.where({ id: requirementId })
		.update({ current_revision: next, updated_at: db.fn.now() });
	return next;
}

/** child is derived from parent. */
export async function linkRequirements(childId: number, parentId: number) {
	const db = testDb();
	const [c, p] = await Promise.all([
		db('requirements').where({ id: childId }).first('current_revision'),
		db('requirements').where({ id: parentId }).first('current_revision')
	]);
	const [l] = await db('requirement_links')
		.insert({
			child_id: childId,
			parent_id: parentId,
			child_revision: c.current_revision,
			parent_revision: p.current_revision
		})
		.returning('*');
	return l as { id: number };
}

export async function removeLink(linkId: number) {
	await testDb()('requirement_links').where({ id: linkId }).update({ removed_at: testDb().fn.now() });
}

/** A first-order lag k/(tau s + 1) as one operating point, in the engine's tf form. */
export function lagModel(k = 1, tau = 0.1) {
	return { operatingPoints: [{ label: 'nominal', model: { kind: 'tf', num: [k], den: [tau, 1] } }] };
}

export async function createModel(projectId: number, o: { name?: string; ownerId?: number | null } = {}) {
	const [m] = await testDb()('models')
		.insert({ project_id: projectId, name: o.name ?? unique('loop-'), owner_id: o.ownerId ?? null })
		.returning('*');
	return { id: Number(m.id), name: m.name as string };
}

/** Publish the next version of a model (becomes its latest). */
export async function createModelVersion(
	modelId: number,
	content: unknown = lagModel(),
	note = 'test version'
) {
	const db = testDb();
	return db.transaction(async (trx) => {
		const m = await trx('models').where({ id: modelId }).forUpdate().first('latest_version');
		const version = Number(m.latest_version) + 1;
		const hash = sha(JSON.stringify(content));
		const [v] = await trx('model_versions')
			.insert({ model_id: modelId, version, note, content: JSON.stringify(content), content_hash: hash })
			.returning('*');
		await trx('models').where({ id: modelId }).update({ latest_version: version });
		return { id: Number(v.id), version, hash };
	});
}

/** A stability specification (new version) made current for the requirement. */
export async function createSpec(
	requirementId: number,
	o: {
		modelId: number;
		check?: Record<string, unknown>;
		requiredMargin?: number | null;
		modelVersionId?: number | null;
	}
) {
	const db = testDb();
	const last = await db('stability_specs')
		.where({ requirement_id: requirementId })
		.max('version as v')
		.first();
	const version = Number(last?.v ?? 0) + 1;
	const check = o.check ?? { type: 'circle', sector: [0.5, 2] };
	const [s] = await db('stability_specs')
		.insert({
			requirement_id: requirementId,
			version,
			check: JSON.stringify(check),
			required_margin: o.requiredMargin ?? null,
			model_id: o.modelId,
			model_version_id: o.modelVersionId ?? null,
			content_hash: sha(JSON.stringify([requirementId, version, check, o.modelId])),
			author_id: null
		})
		.returning('*');
	await db('requirements')
		.where({ id: requirementId })
		.update({ current_spec_id: s.id, updated_at: db.fn.now() });
	return { id: Number(s.id), version };
}

/**
 * An analysis run of the requirement's current inputs (revision, specification, model version in
 * force), inserted directly: no job is sent, so the worker leaves it alone.
 */
export async function createRun(
	requirementId: number,
	o: {
		engineVersion: string;
		status?: 'queued' | 'running' | 'done' | 'error';
		verdict?: 'pass' | 'fail' | 'inconclusive' | null;
		result?: Record<string, unknown> | null;
		worstPoint?: string | null;
		finishedAt?: Date;
		/** Plot curves as the worker stores them (analyses/compute.ts computeRun). */
		curves?: unknown;
		/** The output hash the worker would record (default: a stand-in over the inputs). */
		outputHash?: string;
	}
) {
	const db = testDb();
	// The model version in force: the view requirement_inputs (migration 20261202100000).
	const r = await db('requirement_inputs')
		.where('requirement_id', requirementId)
		.first(
			'project_id',
			'requirement_revision as current_revision',
			'spec_id',
			'model_version_id as mv_id',
			'model_hash as content_hash'
		);
	const status = o.status ?? 'done';
	const finished = status === 'done' || status === 'error';
	const result = o.result === undefined ? (o.verdict ? { verdict: o.verdict, numbers: {} } : null) : o.result;
	const [run] = await db('analysis_runs')
		.insert({
			project_id: r.project_id,
			requirement_id: requirementId,
			requirement_revision: r.current_revision,
			spec_id: r.spec_id,
			model_version_id: r.mv_id,
			model_hash: r.content_hash,
			engine_version: o.engineVersion,
			status,
			verdict: finished && status === 'done' ? (o.verdict ?? 'pass') : null,
			result: result ? JSON.stringify(result) : null,
			worst_point: o.worstPoint ?? (finished ? 'nominal' : null),
			output_hash: finished ? (o.outputHash ?? sha(JSON.stringify([requirementId, r.mv_id, result]))) : null,
			curves: o.curves === undefined ? null : JSON.stringify(o.curves),
			error: status === 'error' ? 'engine failed' : null,
			trigger: 'requirement-revision',
			started_at: finished ? (o.finishedAt ?? new Date()) : null,
			finished_at: finished ? (o.finishedAt ?? new Date()) : null,
			duration_ms: finished ? 5 : null
		})
		.returning('*');
	return { id: Number(run.id), outputHash: run.output_hash as string | null };
}

/** An evidence item (one file revision) verifying some requirements, optionally reviewed. */
export async function createEvidence(
	projectId: number,
	requirementIds: number[],
	o: {
		title?: string;
		review?: 'accepted' | 'rejected';
		reviewer?: { id: number; email: string };
		content?: string;
		method?: 'test' | 'inspection' | 'demonstration';
	} = {}
) {
	const db = testDb();
	return db.transaction(async (trx) => {
		const [e] = await trx('evidence').insert({ project_id: projectId }).returning('*');
		const content = o.content ?? `frequency,magnitude,phase\n1,0.5,-10\n${unique('e')}\n`;
		const [f] = await trx('evidence_files')
			.insert({
				evidence_id: e.id,
				revision: 1,
				title: o.title ?? 'Rig frequency response',
				kind: 'frequency-response',
				method: o.method ?? 'test',
				original_name: 'rig-response.csv',
				storage_key: `test/${unique('k')}/rig-response.csv`,
				content_type: 'text/csv',
				size_bytes: Buffer.byteLength(content),
				sha256: sha(content),
				uploaded_by_label: 'factory'
			})
			.returning('*');
		for (const rid of requirementIds)
			await trx('evidence_links').insert({ evidence_file_id: f.id, requirement_id: rid });
		if (o.review) {
			await trx('evidence_reviews').insert({
				evidence_file_id: f.id,
				decision: o.review,
				comment: o.review === 'accepted' ? 'Matches the rig log.' : 'Wrong configuration.',
				meaning: 'reviewed as evidence of verification',
				reviewer_id: o.reviewer?.id ?? null,
				reviewer_label: o.reviewer?.email ?? 'reviewer@example.test',
				reviewer_role: 'certifier',
				sha256: f.sha256
			});
		}
		return { id: Number(e.id), fileId: Number(f.id), sha256: f.sha256 as string };
	});
}

/** Review an evidence file that has none yet. */
export async function reviewEvidence(
	fileId: number,
	decision: 'accepted' | 'rejected',
	reviewerLabel = 'reviewer@example.test'
) {
	const db = testDb();
	const f = await db('evidence_files').where({ id: fileId }).first('sha256');
	await db('evidence_reviews').insert({
		evidence_file_id: fileId,
		decision,
		comment: decision === 'accepted' ? 'Matches the rig log.' : 'Wrong configuration.',
		meaning: 'reviewed as evidence of verification',
		reviewer_label: reviewerLabel,
		reviewer_role: 'certifier',
		sha256: f.sha256
	});
}

/** A frozen baseline with an empty manifest (a valid frozen state), inserted directly. */
export async function createBaseline(projectId: number, label = 'Route table baseline') {
	const db = testDb();
	const p = await db('projects').where({ id: projectId }).first('key', 'name');
	const last = await db('baselines').where({ project_id: projectId }).max('number as n').first();
	const text = JSON.stringify({
		format: 'loopwarden-snapshot/1',
		project: { key: p.key, name: p.name },
		engineVersion: 'test',
		requirements: [],
		links: [],
		modelVersions: [],
		evidence: []
	});
	const [b] = await db('baselines')
		.insert({
			project_id: projectId,
			number: Number(last?.n ?? 0) + 1,
			label,
			manifest: text,
			manifest_hash: sha(text),
			engine_version: 'test',
			requirement_count: 0,
			created_by_label: 'route table'
		})
		.returning('id');
	return { id: Number(b.id) };
}

/**
 * A data package record, queued and never built (no queue job): for the route table and the package
 * API's state without waiting for a worker.
 */
export async function createPackageRecord(projectId: number, baselineId: number | null) {
	const [p] = await testDb()('data_packages')
		.insert({ project_id: projectId, baseline_id: baselineId, requested_by_label: 'factory' })
		.returning('*');
	return { ...p, id: Number(p.id) };
}

/**
 * A run of the requirement's current inputs with the engine's own answer: computeRun on the model
 * version's content, as the worker computes it (verdict, result, curves, output hash), inserted
 * without a queue job.
 */
export async function createComputedRun(
	requirementId: number,
	check: Record<string, unknown>,
	content: unknown,
	requiredMargin: number | null = null
) {
	const { computeRun } = await import('../../src/lib/server/analyses/compute');
	const { ENGINE_VERSION } = await import('../../src/lib/stability/index');
	const out = computeRun({ check, requiredMargin, operatingPoints: null, content: content as never });
	return createRun(requirementId, {
		engineVersion: ENGINE_VERSION,
		verdict: out.verdict,
		result: out.result,
		worstPoint: out.worstPoint,
		curves: out.curves,
		outputHash: out.outputHash
	});
}

/** An import that was read but carries a problem (a missing title), so confirming it is refused. */
export async function createImportRecord(projectId: number): Promise<number> {
	const preview = {
		format: 'csv',
		fileName: 'route-table.csv',
		counts: { new: 0, changed: 0, unchanged: 0, problems: 1 },
		problems: [{ row: 2, column: 'A (Title)', message: 'Title is missing.' }],
		items: [],
		offer: { kind: 'sheet', sheets: ['CSV'], sheet: 'CSV', headers: ['Title'] }
	};
	const [row] = await testDb()('imports')
		.insert({
			project_id: projectId,
			format: 'csv',
			file_name: 'route-table.csv',
			file_sha256: '0'.repeat(64),
			size_bytes: 6,
			content: Buffer.from('Title\n'),
			mapping: JSON.stringify({ sheet: 'CSV', headerRow: 1, columns: { title: 'Title' }, defaults: {} }),
			preview: JSON.stringify(preview),
			project_state: 'route-table'
		})
		.returning('id');
	return Number(row.id);
}
