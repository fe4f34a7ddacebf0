import { createHash } from 'node:crypto';
import { checkConsistency } from '../../requirements/consistency';
import { qualityHints } from '../../requirements/quality';
import { enqueueForRequirement } from '../analyses/queue';
import {
	verificationOf,
	type AnalysisStateInfo,
	type RequirementVerification
} from '../verification/service';
import { COMBINED_LOOK, type VerificationState } from '../../verification/index';
import { canonical, eventView, historyOf, recordEvent, type Actor, type StoredEvent } from '../audit';
import { db, readTogether, type Db } from '../db';
import type { Knex } from 'knex';
import { ServiceError } from '../errors';
import {
	links,
	models,
	projectsForRequirements as projects,
	requirements,
	revisions,
	specs,
	type RequirementView,
	type RevisionRow,
	type SpecRow
} from './repo';
import type { CreateRequirement, ListFilters, ReviseRequirement, SpecificationInput } from './schema';

// Requirements: never-reused identifiers, immutable revisions with optimistic concurrency,
// derived-from links without cycles, and immutable stability specifications. Every change writes its
// audit event and queues the re-verification in its own transaction.

export interface ProjectRef {
	id: number;
	key: string;
}

/** The editable fields of a revision, with the API's names. */
export interface RevisionFields {
	title: string;
	statement: string;
	rationale: string;
	level: string;
	assuranceLevel: string;
	methods: string[];
	ownerId: number | null;
	status: string;
}
const FIELD_NAMES: (keyof RevisionFields)[] = [
	'title',
	'statement',
	'rationale',
	'level',
	'assuranceLevel',
	'methods',
	'ownerId',
	'status'
];

const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex');

export function fieldsOf(r: RevisionRow): RevisionFields {
	return {
		title: r.title,
		statement: r.statement,
		rationale: r.rationale,
		level: r.level,
		assuranceLevel: r.assurance_level,
		methods: [...r.methods],
		ownerId: r.owner_id == null ? null : Number(r.owner_id),
		status: r.status
	};
}

const same = (a: unknown, b: unknown) => canonical(a) === canonical(b);

function contentHash(f: RevisionFields): string {
	return sha256(canonical(f));
}

export function identifierOf(key: string, n: number): string {
	return `${key}-${String(n).padStart(3, '0')}`;
}

/** The status a revision is written with: retired stays retired, anything else starts as a draft. */
export const writtenStatus = (s: string) => (s === 'retired' ? 'retired' : 'draft');

async function checkOwner(trx: Db, projectId: number, ownerId: number | null) {
	if (ownerId == null) throw new ServiceError(400, 'Choose an owner.', { ownerId: 'Choose an owner.' });
	if (!(await projects.isMember(trx, projectId, ownerId))) {
		throw new ServiceError(400, 'The owner must be a member of the project.', {
			ownerId: 'Not a member of this project.'
		});
	}
}

async function audit(
	trx: Db,
	actor: Actor,
	projectId: number,
	action: string,
	subjectId: number,
	before: unknown,
	after: unknown
) {
	await recordEvent(trx, actor, { projectId, action, subjectType: 'requirement', subjectId, before, after });
}

// ---- reading ----

export interface RequirementSummary {
	id: number;
	identifier: string;
	revision: number;
	title: string;
	statement: string;
	level: string;
	assuranceLevel: string;
	methods: string[];
	status: string;
	owner: { id: number; name: string | null; email: string | null } | null;
	specId: number | null;
	updatedAt: string;
	analysis: AnalysisStateInfo;
	/** The one verification state (src/lib/verification): combined state, label, symbol, blockers. */
	verification: VerificationState;
}

const NOT_FOUND_STATE: VerificationState = {
	state: 'not-covered',
	...COMBINED_LOOK['not-covered'],
	analysis: 'not-analysed',
	evidence: {},
	how: null,
	blockers: []
};

function summary(v: RequirementView, rv: RequirementVerification | undefined): RequirementSummary {
	const changed = new Date(v.updated_at) > new Date(v.created_at) ? v.updated_at : v.created_at;
	return {
		id: Number(v.id),
		identifier: v.identifier,
		revision: v.current_revision,
		title: v.title,
		statement: v.statement,
		level: v.level,
		assuranceLevel: v.assurance_level,
		methods: v.methods,
		status: v.status,
		owner: v.owner_id == null ? null : { id: Number(v.owner_id), name: v.owner_name, email: v.owner_email },
		specId: v.current_spec_id == null ? null : Number(v.current_spec_id),
		updatedAt: new Date(changed).toISOString(),
		analysis: rv?.analysisInfo ?? { state: 'not-analysed' },
		verification: rv
			? {
					state: rv.state,
					label: rv.label,
					symbol: rv.symbol,
					tone: rv.tone,
					analysis: rv.analysis,
					evidence: rv.evidence,
					how: rv.how,
					blockers: rv.blockers
				}
			: NOT_FOUND_STATE
	};
}

export async function listRequirements(
	projectId: number,
	filters: ListFilters
): Promise<RequirementSummary[]> {
	const rows = await requirements.list(db(), projectId, filters);
	const states = await verificationOf(db(), { projectId });
	return rows.map((r) => summary(r, states.get(Number(r.id))));
}

export const countRequirements = (projectId: number) => requirements.count(db(), projectId);
export const projectMembers = (projectId: number) => projects.members(db(), projectId);
export const requirementOptions = (projectId: number) => requirements.options(db(), projectId);
export const modelsForSpecs = async (projectId: number) => {
	const [ms, vs] = await Promise.all([models.inProject(db(), projectId), models.versions(db(), projectId)]);
	return ms.map((m) => ({
		id: Number(m.id),
		name: m.name,
		latestVersion: m.latest_version,
		versions: vs
			.filter((v) => Number(v.model_id) === Number(m.id))
			.map((v) => ({
				id: Number(v.id),
				version: v.version,
				hash: v.content_hash,
				points: (v.points ?? []).map((p) => p.label)
			}))
	}));
};

export interface SpecView {
	id: number;
	version: number;
	check: Record<string, unknown>;
	requiredMargin: number | null;
	operatingPoints: string[] | null;
	modelId: number;
	modelName: string | null;
	modelVersionId: number | null;
	modelVersion: number | null;
	template: string | null;
	contentHash: string;
	author: string | null;
	createdAt: string;
}

function specView(
	s: SpecRow & { author_name?: string | null; model_name?: string | null; model_version?: number | null }
): SpecView {
	return {
		id: Number(s.id),
		version: s.version,
		check: s.check,
		requiredMargin: s.required_margin,
		operatingPoints: s.operating_points,
		modelId: Number(s.model_id),
		modelName: s.model_name ?? null,
		modelVersionId: s.model_version_id == null ? null : Number(s.model_version_id),
		modelVersion: s.model_version ?? null,
		template: s.template,
		contentHash: s.content_hash,
		author: s.author_name ?? null,
		createdAt: new Date(s.created_at).toISOString()
	};
}

/** One requirement with its current revision, specification and links (null when missing). */
export async function getRequirement(id: number) {
	return (await requirementAndSpecs(id))?.detail ?? null;
}

/** A requirement's page: the detail and its history (the specification versions read once for both). */
export async function requirementPage(id: number) {
	const found = await requirementAndSpecs(id, true);
	if (!found) return null;
	return {
		requirement: found.detail,
		history: historyView(
			found.revs as unknown as RevisionRows,
			found.specList,
			found.events as unknown as StoredEvent[]
		)
	};
}

type RevisionRows = Awaited<ReturnType<typeof revisions.all>>;
type LinkRows = Awaited<ReturnType<typeof links.around>>;
const builder = (q: unknown) => q as Knex.QueryBuilder;

/** The requirement's rows in one round trip (plus its analysis state beside it); with its history. */
async function requirementAndSpecs(id: number, withHistory = false) {
	const parts: Parameters<typeof readTogether<string>>[1] = {
		view: { query: builder(requirements.view(db(), id)) },
		links: { query: builder(links.around(db(), id)), orderBy: { column: 'created_at' } },
		specs: { query: builder(specs.all(db(), id)), orderBy: { column: 'version', desc: true } }
	};
	if (withHistory) {
		parts.revisions = {
			query: builder(revisions.all(db(), id)),
			orderBy: { column: 'revision', desc: true }
		};
		parts.events = {
			query: builder(historyOf(db(), 'requirement', id)),
			orderBy: { column: 'seq', desc: true }
		};
	}
	const [rows, states] = await Promise.all([
		readTogether(db(), parts),
		verificationOf(db(), { requirementIds: [id] })
	]);
	const v = rows.view[0] as unknown as RequirementView | undefined;
	if (!v) return null;
	const around = rows.links as unknown as LinkRows;
	const specList = rows.specs as unknown as SpecRows;
	const current = specList.find((s) => Number(s.id) === Number(v.current_spec_id));
	const detail = {
		...summary(v, states.get(id)),
		projectId: Number(v.project_id),
		rationale: v.rationale,
		changeNote: v.change_note,
		contentHash: v.content_hash,
		specification: current ? specView(current) : null,
		quality: qualityHints(v.statement),
		consistency: current
			? checkConsistency(v.statement, {
					check: current.check as never,
					requiredMargin: current.required_margin
				})
			: null,
		parents: around
			.filter((l) => Number(l.child_id) === id)
			.map((l) => ({
				linkId: Number(l.id),
				id: Number(l.parent_id),
				identifier: l.parent_identifier,
				title: l.parent_title,
				linkedRevision: l.parent_revision,
				currentRevision: l.parent_current_revision,
				ownRevision: l.child_revision
			})),
		children: around
			.filter((l) => Number(l.parent_id) === id)
			.map((l) => ({
				linkId: Number(l.id),
				id: Number(l.child_id),
				identifier: l.child_identifier,
				title: l.child_title,
				linkedRevision: l.child_revision,
				currentRevision: l.child_current_revision,
				ownRevision: l.parent_revision
			}))
	};
	return { detail, specList, revs: rows.revisions, events: rows.events };
}
export type RequirementDetail = NonNullable<Awaited<ReturnType<typeof getRequirement>>>;
type SpecRows = Awaited<ReturnType<typeof specs.all>>;

/** The page's history: revisions, specification versions and audit events, newest first. */
function historyView(revs: RevisionRows, specList: SpecRows, events: StoredEvent[]) {
	return {
		revisions: revs.map((r) => ({
			revision: r.revision,
			...fieldsOf(r),
			owner: r.owner_name ?? '',
			author: r.author_name,
			changeNote: r.change_note,
			contentHash: r.content_hash,
			createdAt: new Date(r.created_at).toISOString()
		})),
		specifications: specList.map(specView),
		events: events.map(eventView)
	};
}

// ---- changing ----

/**
 * How an import calls the acts below: inside its own transaction (`conn`; each act then runs in a
 * savepoint of it), with an identifier from the file, and with the project's derived-from edges it
 * keeps itself (so a thousand links do not read the project's links a thousand times; addLink still
 * decides the cycle rule on them and appends what it adds).
 */
export interface ActOptions {
	conn?: Db;
	identifier?: string;
	edges?: { child_id: number; parent_id: number }[];
}

/**
 * Create a requirement: the next identifier of the project (never reused) and revision 1. An import may
 * keep the identifier a file gives (`opts.identifier`) when the project does not use it; the counter
 * then moves past it when it has the project's own form, so no later identifier can repeat it.
 */
export async function createRequirement(
	actor: Actor,
	project: ProjectRef,
	input: CreateRequirement,
	opts: ActOptions = {}
) {
	return (opts.conn ?? db()).transaction(async (trx) => {
		const fields: RevisionFields = {
			title: input.title,
			statement: input.statement,
			rationale: input.rationale,
			level: input.level,
			assuranceLevel: input.assuranceLevel,
			methods: input.methods,
			ownerId: input.ownerId ?? actor.userId ?? null,
			status: writtenStatus(input.status)
		};
		await checkOwner(trx, project.id, fields.ownerId);
		const n = await projects.takeNumber(trx, project.id);
		let identifier = identifierOf(project.key, n);
		if (opts.identifier !== undefined && opts.identifier !== identifier) {
			identifier = opts.identifier;
			if (await requirements.byIdentifier(trx, project.id, identifier)) {
				throw new ServiceError(409, `${identifier} is already a requirement of this project.`, {
					identifier: 'This identifier is taken.'
				});
			}
			const own = new RegExp(`^${project.key}-(\\d+)$`).exec(identifier);
			if (own) await projects.moveNumberPast(trx, project.id, Number(own[1]));
		}
		const req = await requirements.insert(trx, {
			project_id: project.id,
			number: n,
			identifier,
			created_by: actor.userId ?? null
		});
		await revisions.insert(trx, revisionRow(Number(req.id), 1, fields, input.changeNote, actor));
		await audit(trx, actor, project.id, 'requirement.create', req.id, null, {
			identifier,
			revision: 1,
			...fields
		});
		await enqueueForRequirement(trx, Number(req.id), {
			kind: 'requirement-revision',
			ref: `requirement:${req.id}:r1`,
			userId: actor.userId ?? null
		});
		return { id: Number(req.id), identifier, revision: 1 };
	});
}

function revisionRow(requirementId: number, revision: number, f: RevisionFields, note: string, actor: Actor) {
	return {
		requirement_id: requirementId,
		revision,
		title: f.title,
		statement: f.statement,
		rationale: f.rationale,
		level: f.level,
		assurance_level: f.assuranceLevel,
		methods: f.methods,
		owner_id: f.ownerId,
		status: f.status,
		change_note: note,
		author_id: actor.userId ?? null,
		content_hash: contentHash(f)
	};
}

/**
 * Revise a requirement. `input.revision` is the revision the caller edited: when it is not the current
 * one, nothing is written and a 409 says what changed since (yours = what you sent, theirs = current).
 * An edit that changes nothing makes no revision.
 */
export async function reviseRequirement(
	actor: Actor,
	requirementId: number,
	input: ReviseRequirement,
	opts: ActOptions = {}
) {
	return (opts.conn ?? db()).transaction(async (trx) => {
		const req = await requirements.lock(trx, requirementId);
		if (!req) throw new ServiceError(404, 'There is no such requirement.');
		const currentRow = await revisions.get(trx, requirementId, req.current_revision);
		// A revision is written as a draft (or retired); its review happens afterwards (review.ts).
		const current = { ...fieldsOf(currentRow!), status: writtenStatus(currentRow!.status) };
		const next: RevisionFields = { ...current };
		for (const k of FIELD_NAMES) {
			const v = input[k];
			if (v !== undefined) (next as unknown as Record<string, unknown>)[k] = v;
		}
		if (input.revision !== req.current_revision) {
			const baseRow =
				input.revision < req.current_revision
					? await revisions.get(trx, requirementId, input.revision)
					: undefined;
			const base = baseRow ? fieldsOf(baseRow) : null;
			const changed: Record<string, { yours: unknown; theirs: unknown }> = {};
			for (const k of FIELD_NAMES) {
				if (base && same(base[k], current[k])) continue;
				if (!base && same(next[k], current[k])) continue;
				changed[k] = {
					yours: input[k] !== undefined ? input[k] : base ? base[k] : undefined,
					theirs: current[k]
				};
			}
			throw new ServiceError(
				409,
				base
					? `${req.identifier} changed since revision ${input.revision}: it is at revision ${req.current_revision} now (${Object.keys(changed).join(', ') || 'no field'} changed). Nothing was saved.`
					: `${req.identifier} has no revision ${input.revision}; the current one is ${req.current_revision}. Nothing was saved.`,
				{ revision: `The current revision is ${req.current_revision}.` },
				{ currentRevision: req.current_revision, changed }
			);
		}
		if (next.ownerId !== current.ownerId) await checkOwner(trx, Number(req.project_id), next.ownerId);
		if (same(next, current)) {
			return {
				id: requirementId,
				identifier: req.identifier,
				revision: req.current_revision,
				unchanged: true
			};
		}
		const revision = req.current_revision + 1;
		await revisions.insert(trx, revisionRow(requirementId, revision, next, input.changeNote, actor));
		await requirements.setCurrentRevision(trx, requirementId, revision);
		const before: Record<string, unknown> = { revision: req.current_revision };
		const after: Record<string, unknown> = { revision };
		for (const k of FIELD_NAMES) {
			if (!same(current[k], next[k])) {
				before[k] = current[k];
				after[k] = next[k];
			}
		}
		const action =
			next.status !== current.status ? `requirement.status.${next.status}` : 'requirement.revise';
		await audit(trx, actor, Number(req.project_id), action, requirementId, before, after);
		await enqueueForRequirement(trx, requirementId, {
			kind: 'requirement-revision',
			ref: `requirement:${requirementId}:r${revision}`,
			userId: actor.userId ?? null
		});
		return { id: requirementId, identifier: req.identifier, revision, unchanged: false };
	});
}

/** child is derived from parent. Refuses links across projects, duplicates and cycles (naming the cycle). */
export async function addLink(actor: Actor, childId: number, parentId: number, opts: ActOptions = {}) {
	if (childId === parentId) {
		throw new ServiceError(400, 'A requirement cannot be derived from itself.', {
			parentId: 'Choose another requirement.'
		});
	}
	return (opts.conn ?? db()).transaction(async (trx) => {
		const child = await requirements.byId(trx, childId);
		const parent = await requirements.byId(trx, parentId);
		if (!child) throw new ServiceError(404, 'There is no such requirement.');
		if (!parent || Number(parent.project_id) !== Number(child.project_id)) {
			throw new ServiceError(400, 'The parent must be a requirement of the same project.', {
				parentId: 'No such requirement in this project.'
			});
		}
		// One link change at a time per project, so two concurrent links cannot close a cycle together.
		await projects.lock(trx, Number(child.project_id));
		if (await links.active(trx, childId, parentId)) {
			throw new ServiceError(409, `${child.identifier} is already derived from ${parent.identifier}.`, {
				parentId: 'This link exists already.'
			});
		}
		const edges = opts.edges ?? (await links.activeInProject(trx, Number(child.project_id)));
		const path = pathUp(edges, parentId, childId);
		if (path) {
			const ids = [childId, ...path];
			const all = await requirements.views(trx, ids);
			const name = new Map(all.map((r) => [Number(r.id), r.identifier]));
			const cycle = ids.map((i) => name.get(i) ?? `#${i}`).join(' → ');
			throw new ServiceError(
				409,
				`Refused: ${child.identifier} derived from ${parent.identifier} would close the cycle ${cycle}.`,
				{ parentId: `This link would close the cycle ${cycle}.` },
				{ cycle: ids.map((i) => name.get(i) ?? `#${i}`) }
			);
		}
		const link = await links.insert(trx, {
			child_id: childId,
			parent_id: parentId,
			child_revision: child.current_revision,
			parent_revision: parent.current_revision,
			created_by: actor.userId ?? null
		});
		opts.edges?.push({ child_id: childId, parent_id: parentId });
		await audit(trx, actor, Number(child.project_id), 'requirement.link', childId, null, {
			derivedFrom: parent.identifier,
			childRevision: child.current_revision,
			parentRevision: parent.current_revision
		});
		return { linkId: Number(link.id) };
	});
}

/** A path from `from` to `to` following child -> parent edges (the parents' own parents ...), or null. */
export function pathUp(
	edges: { child_id: number; parent_id: number }[],
	from: number,
	to: number
): number[] | null {
	const up = new Map<number, number[]>();
	for (const e of edges) {
		const c = Number(e.child_id);
		if (!up.has(c)) up.set(c, []);
		up.get(c)!.push(Number(e.parent_id));
	}
	const prev = new Map<number, number>();
	const queue = [from];
	const seen = new Set([from]);
	while (queue.length) {
		const n = queue.shift()!;
		if (n === to) {
			const path = [n];
			let k = n;
			while (k !== from) {
				k = prev.get(k)!;
				path.unshift(k);
			}
			return path;
		}
		for (const p of up.get(n) ?? []) {
			if (seen.has(p)) continue;
			seen.add(p);
			prev.set(p, n);
			queue.push(p);
		}
	}
	return null;
}

export async function removeLink(actor: Actor, requirementId: number, linkId: number) {
	return db().transaction(async (trx) => {
		const link = await links.byId(trx, linkId);
		if (
			!link ||
			link.removed_at ||
			(Number(link.child_id) !== requirementId && Number(link.parent_id) !== requirementId)
		) {
			throw new ServiceError(404, 'This link does not exist (or was removed already).', {
				linkId: 'No such link.'
			});
		}
		const child = await requirements.byId(trx, Number(link.child_id));
		const parent = await requirements.byId(trx, Number(link.parent_id));
		await links.remove(trx, linkId, actor.userId ?? null);
		await audit(
			trx,
			actor,
			Number(child!.project_id),
			'requirement.unlink',
			Number(link.child_id),
			{ derivedFrom: parent!.identifier },
			null
		);
	});
}

/**
 * A new version of the requirement's stability specification (rows are immutable). Returns the
 * current one unchanged when nothing differs.
 */
export async function setSpecification(
	actor: Actor,
	requirementId: number,
	input: SpecificationInput,
	opts: ActOptions = {}
) {
	return (opts.conn ?? db()).transaction(async (trx) => {
		const req = await requirements.lock(trx, requirementId);
		if (!req) throw new ServiceError(404, 'There is no such requirement.');
		const model = await models.lock(trx, input.modelId);
		if (!model || Number(model.project_id) !== Number(req.project_id)) {
			throw new ServiceError(400, 'Choose a model of this project.', {
				modelId: 'No such model in this project.'
			});
		}
		let pointsFrom: { version: number; labels: string[] } | null = null;
		if (input.modelVersionId != null) {
			const v = await models.version(trx, input.modelVersionId);
			if (!v || Number(v.model_id) !== Number(model.id)) {
				throw new ServiceError(400, `That version does not belong to ${model.name}.`, {
					modelVersionId: `Not a version of ${model.name}.`
				});
			}
			pointsFrom = { version: v.version, labels: (v.content.operatingPoints ?? []).map((p) => p.label) };
		}
		if (input.operatingPoints && pointsFrom) {
			const unknown = input.operatingPoints.filter((p) => !pointsFrom!.labels.includes(p));
			if (unknown.length) {
				throw new ServiceError(
					400,
					`Version ${pointsFrom.version} of ${model.name} has no operating point ${unknown.join(', ')}.`,
					{
						operatingPoints: `Unknown: ${unknown.join(', ')}. Known: ${pointsFrom.labels.join(', ') || 'none'}.`
					}
				);
			}
		}
		const current = req.current_spec_id ? await specs.byId(trx, Number(req.current_spec_id)) : undefined;
		const currentVersion = current?.version ?? 0;
		if (input.baseVersion !== undefined && input.baseVersion !== currentVersion) {
			throw new ServiceError(
				409,
				`The specification of ${req.identifier} changed: it is at version ${currentVersion}, you edited version ${input.baseVersion}. Nothing was saved.`,
				{ baseVersion: `The current version is ${currentVersion}.` },
				{ currentVersion }
			);
		}
		const content = {
			check: JSON.parse(JSON.stringify(input.check)) as Record<string, unknown>,
			requiredMargin: input.requiredMargin,
			operatingPoints: input.operatingPoints,
			modelId: Number(model.id),
			modelVersionId: input.modelVersionId
		};
		const hash = sha256(canonical(content));
		if (current && current.content_hash === hash) {
			return { id: Number(current.id), version: current.version, unchanged: true };
		}
		const version = (await specs.latestVersion(trx, requirementId)) + 1;
		const row = await specs.insert(trx, {
			requirement_id: requirementId,
			version,
			check: content.check,
			required_margin: content.requiredMargin,
			operating_points: content.operatingPoints,
			model_id: content.modelId,
			model_version_id: content.modelVersionId,
			template: input.template,
			content_hash: hash,
			author_id: actor.userId ?? null
		});
		await requirements.setCurrentSpec(trx, requirementId, Number(row.id));
		await audit(
			trx,
			actor,
			Number(req.project_id),
			'requirement.specification',
			requirementId,
			current
				? { version: current.version, check: current.check, requiredMargin: current.required_margin }
				: null,
			{ version, ...content, template: input.template }
		);
		await enqueueForRequirement(trx, requirementId, {
			kind: 'spec-edit',
			ref: `spec:${row.id}`,
			userId: actor.userId ?? null
		});
		return { id: Number(row.id), version, unchanged: false };
	});
}
