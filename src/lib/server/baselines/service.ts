import { createHash } from 'node:crypto';
import { ENGINE_VERSION } from '../../stability/index';
import { blocksFreeze, freezeBlockedSentence } from '../../verification/index';
import { canonical, recordEvent, type Actor } from '../audit';
import { db } from '../db';
import { ServiceError } from '../errors';
import { snapshot, type Snapshot, type SnapshotRequirement } from '../trace/service';
import { compareSnapshots, type Comparison } from './compare';
import { baselines, type BaselineRow, type BaselineSummary } from './repo';
import { freezeForm } from './schema';
import { deferredFindings } from '../findings/service';
import type { Signer } from '../identity/reauth';
import type { ActingRole } from '../identity/roles';
import { sign, signaturesOf } from '../signatures/service';
import type { Db } from '../db';

// Baselines: a certifier freezes the project. The manifest is the project's snapshot (every current
// requirement revision with its content hash, trace links, model versions with their hashes, the latest
// analysis run per requirement with its output hash, every evidence revision with its SHA-256 and review
// state, the engine version); its own SHA-256 is taken over its canonical JSON (keys sorted, no
// whitespace: audit.ts canonical()), so the same state always gives the same hash.

/**
 * The snapshot, plus what the sign-off adds: the findings deferred by signature (a freeze is refused
 * while any is open), and per requirement the revision in force (the latest approved one) beside the
 * current revision with its review state.
 */
export type Manifest = Omit<Snapshot, 'requirements'> & {
	requirements: ManifestRequirement[];
	deferredFindings?: Awaited<ReturnType<typeof deferredFindings>>;
	review?: { requirement: string; revision: number; state: string; approvedRevision: number | null }[];
};

/**
 * A requirement as a baseline keeps it. From the release of issue 15's sign-off on, the texts (title,
 * statement, rationale, level, assurance level, methods, content hash, revision) are those of the
 * frozen revision, and `frozen` says which one that is. Manifests frozen before carry no `frozen`
 * and their current texts; they are never rewritten, so their SHA-256 still verifies.
 */
export type ManifestRequirement = SnapshotRequirement & { frozen?: FrozenRevision };

/**
 * Which revision of a requirement a baseline freezes: the approved one (the revision signed with
 * "requirement.approve", in force until a later one is approved) when there is one; else the current
 * revision, marked as never approved. The verification state, blockers, analysis and evidence beside
 * it are the project's at the freeze (they are computed for the current revision).
 */
export interface FrozenRevision {
	/** The revision whose texts this entry holds. */
	revision: number;
	/** The latest approved revision, or null when none was ever approved. */
	approvedRevision: number | null;
	/** The requirement's current revision at the freeze. */
	currentRevision: number;
	/** A revision newer than the approved one exists and is not approved (its texts are not in this baseline). */
	newerUnapprovedRevision: boolean;
}

export function manifestHash(manifest: Manifest): string {
	return createHash('sha256').update(canonical(manifest), 'utf8').digest('hex');
}

export interface Blocker {
	id: number;
	identifier: string;
	title: string;
	reasons: string[];
}

/**
 * Requirements that may not be frozen: the verification blockers that refuse a freeze (a placeholder in
 * the statement, a run not finished; src/lib/verification blocksFreeze).
 */
export function blockersOf(manifest: Manifest): Blocker[] {
	const out: Blocker[] = [];
	for (const r of manifest.requirements) {
		if (r.status === 'retired') continue;
		const reasons = (r.blockers ?? []).filter(blocksFreeze).map((b) => b.text);
		if (reasons.length) out.push({ id: r.id, identifier: r.identifier, title: r.title, reasons });
	}
	return out;
}

/** The current state of a project as a manifest, and what would block freezing it. */
/** The snapshot with the sign-off parts, read in the caller's transaction (or the pool). */
async function manifestOf(projectId: number, trx?: Db): Promise<Manifest> {
	const conn = trx ?? db();
	const snap = await snapshot(projectId, undefined, trx);
	const review = (await conn('requirements')
		.where({ project_id: projectId })
		.orderBy('number')
		.select('identifier', 'current_revision', 'review_state', 'approved_revision')) as {
		identifier: string;
		current_revision: number;
		review_state: string;
		approved_revision: number | null;
	}[];
	const approved = new Map(
		review
			.filter((r) => r.approved_revision !== null && r.approved_revision !== r.current_revision)
			.map((r) => [r.identifier, r.approved_revision!])
	);
	const approvedTexts = await approvedRevisionTexts(conn, projectId, approved);
	const inForce = new Map(review.map((r) => [r.identifier, r]));
	return normalise({
		...snap,
		requirements: snap.requirements.map((req) => {
			const r = inForce.get(req.identifier);
			const current = r?.current_revision ?? req.revision;
			const approvedRevision = r?.approved_revision ?? null;
			const older = approvedTexts.get(req.identifier);
			const frozen: FrozenRevision = {
				revision: older ? older.revision : current,
				approvedRevision,
				currentRevision: current,
				newerUnapprovedRevision: approvedRevision !== null && current > approvedRevision
			};
			return { ...req, ...(older ?? {}), frozen };
		}),
		deferredFindings: await deferredFindings(projectId, conn),
		review: review.map((r) => ({
			requirement: r.identifier,
			revision: r.current_revision,
			state: r.review_state,
			approvedRevision: r.approved_revision
		}))
	});
}

/** The frozen revision in words, for pages and exports ("" for a manifest frozen before it was kept). */
export function frozenWords(f: FrozenRevision | undefined): string {
	if (!f) return '';
	if (f.approvedRevision === null) return `revision ${f.revision}, never approved`;
	return f.newerUnapprovedRevision
		? `approved revision ${f.approvedRevision}; the newer revision ${f.currentRevision} is not approved and not in this baseline`
		: `approved revision ${f.approvedRevision}`;
}

type RevisionTexts = Pick<
	SnapshotRequirement,
	'revision' | 'title' | 'statement' | 'rationale' | 'level' | 'assuranceLevel' | 'methods' | 'contentHash'
>;

/** The texts of the approved revisions that differ from the current ones, by requirement identifier. */
async function approvedRevisionTexts(
	conn: Db,
	projectId: number,
	approved: Map<string, number>
): Promise<Map<string, RevisionTexts>> {
	if (!approved.size) return new Map();
	const rows = (await conn('requirement_revisions as v')
		.join('requirements as r', 'r.id', 'v.requirement_id')
		.where('r.project_id', projectId)
		.whereIn(
			['r.identifier', 'v.revision'],
			[...approved].map(([identifier, revision]) => [identifier, revision])
		)
		.select(
			'r.identifier',
			'v.revision',
			'v.title',
			'v.statement',
			'v.rationale',
			'v.level',
			'v.assurance_level',
			'v.methods',
			'v.content_hash'
		)) as {
		identifier: string;
		revision: number;
		title: string;
		statement: string;
		rationale: string;
		level: string;
		assurance_level: string;
		methods: string[];
		content_hash: string;
	}[];
	return new Map(
		rows.map((v) => [
			v.identifier,
			{
				revision: v.revision,
				title: v.title,
				statement: v.statement,
				rationale: v.rationale,
				level: v.level,
				assuranceLevel: v.assurance_level,
				methods: v.methods,
				contentHash: v.content_hash
			}
		])
	);
}

export async function currentManifest(
	projectId: number
): Promise<{ manifest: Manifest; hash: string; blockers: Blocker[] }> {
	const manifest = await manifestOf(projectId);
	return { manifest, hash: manifestHash(manifest), blockers: blockersOf(manifest) };
}

/** What jsonb gives back is what is hashed: a JSON round trip drops undefined and turns Infinity into null. */
function normalise(m: Manifest): Manifest {
	return JSON.parse(canonical(m)) as Manifest;
}

export const listBaselines = (projectId: number) => baselines.list(db(), projectId);

/** The release signature(s) of a baseline. */
export const releaseOf = (baselineId: number) => signaturesOf(db(), 'baseline', baselineId, null, 'baseline');

export async function getBaseline(
	projectId: number,
	id: number
): Promise<BaselineRow & { manifest: Manifest; verified: boolean }> {
	const row = await baselines.byId(db(), projectId, id);
	if (!row) throw new ServiceError(404, `There is no baseline ${id} in this project.`);
	const manifest = row.manifest as Manifest;
	return { ...row, manifest, verified: manifestHash(manifest) === row.manifest_hash };
}

/** The words for a freeze that would repeat an earlier baseline (same manifest SHA-256). */
export function unchangedSentence(b: { number: number; label: string }): string {
	return `Nothing changed since baseline ${b.number} ("${b.label}"): the project's manifest has the same SHA-256.`;
}

/**
 * Freeze and release a baseline: a certifier's signed act, the manifest's SHA-256 in the signature.
 * Refused (409, nothing stored) while a requirement has a blocker that refuses a freeze, open findings
 * among them (src/lib/verification blocksFreeze); deferred findings are listed in the manifest.
 */
export async function freeze(
	actor: Actor,
	projectId: number,
	raw: unknown,
	release: { role: ActingRole; signer: Signer }
): Promise<BaselineSummary & { signature: number }> {
	const parsed = freezeForm.safeParse(raw);
	if (!parsed.success) {
		const fields: Record<string, string> = {};
		for (const i of parsed.error.issues) fields[String(i.path[0] ?? '_')] ??= i.message;
		throw new ServiceError(400, Object.values(fields)[0] ?? 'Invalid input', fields);
	}
	return db()
		.transaction(
			async (trx) => {
				const number = await baselines.nextNumber(trx, projectId);
				const manifest = await manifestOf(projectId, trx);
				const blockers = blockersOf(manifest);
				if (blockers.length) {
					throw new ServiceError(
						409,
						`${freezeBlockedSentence(blockers.length)}: ${blockers
							.slice(0, 5)
							.map((b) => `${b.identifier} (${b.reasons.join(' ')})`)
							.join(', ')}${blockers.length > 5 ? ' …' : ''}`,
						{},
						{ blockers }
					);
				}
				const hash = manifestHash(manifest);
				const same = await baselines.withHash(trx, projectId, hash);
				if (same && !parsed.data.confirmUnchanged) {
					throw new ServiceError(
						409,
						unchangedSentence(same) +
							' Freeze again only to record the same state under a new name: confirm (confirmUnchanged: true).',
						{},
						{
							unchangedSince: {
								id: Number(same.id),
								number: same.number,
								label: same.label,
								manifestHash: same.manifest_hash
							}
						}
					);
				}
				const row = await baselines.insert(trx, {
					project_id: projectId,
					number,
					label: parsed.data.label,
					note: parsed.data.note,
					manifest: canonical(manifest),
					manifest_hash: hash,
					engine_version: ENGINE_VERSION,
					requirement_count: manifest.requirements.length,
					created_by: actor.userId ?? null,
					created_by_label: actor.label
				});
				const key = (await trx('projects').where({ id: projectId }).first('key')).key as string;
				const signature = await sign(trx, {
					act: 'baseline.release',
					projectId,
					target: { type: 'baseline', id: Number(row.id), revision: number },
					content: { project: key, baseline: number, label: row.label, manifestSha256: hash },
					actor,
					role: release.role,
					signer: release.signer
				});
				await recordEvent(trx, actor, {
					projectId,
					action: 'baseline.freeze',
					subjectType: 'baseline',
					subjectId: row.id,
					after: {
						number,
						label: row.label,
						manifestHash: hash,
						requirements: row.requirement_count,
						signature: Number(signature.id),
						deferredFindings: (manifest.deferredFindings ?? []).map((f) => f.label)
					}
				});
				return { ...row, signature: Number(signature.id) };
			},
			// The manifest is one consistent picture: nothing committed after the snapshot begins shows in it.
			{ isolationLevel: 'repeatable read' }
		)
		.catch((e) => {
			// Two freezes at the same moment: the snapshot of the later one predates the earlier one's number
			// (repeatable read), so the unique number refuses it. Nothing was stored; the user may try again.
			const code = (e as { code?: string }).code;
			if (code === '23505' || code === '40001') {
				throw new ServiceError(
					409,
					'Another baseline was frozen at the same moment; nothing was stored. Try again.'
				);
			}
			throw e;
		});
}

export interface Side {
	kind: 'baseline' | 'now';
	label: string;
	hash: string;
	manifest: Manifest;
	baseline?: BaselineSummary;
}

async function side(projectId: number, which: 'now' | number): Promise<Side> {
	if (which === 'now') {
		const { manifest, hash } = await currentManifest(projectId);
		return { kind: 'now', label: 'Current state', hash, manifest };
	}
	const b = await getBaseline(projectId, which);
	const { manifest, ...summary } = b;
	return {
		kind: 'baseline',
		label: `#${b.number} ${b.label}`,
		hash: b.manifest_hash,
		manifest,
		baseline: summary
	};
}

export async function compare(
	projectId: number,
	from: 'now' | number,
	to: 'now' | number
): Promise<{ from: Omit<Side, 'manifest'>; to: Omit<Side, 'manifest'>; comparison: Comparison }> {
	const a = await side(projectId, from);
	const b = await side(projectId, to);
	const strip = ({ manifest: _m, ...rest }: Side) => rest;
	return { from: strip(a), to: strip(b), comparison: compareSnapshots(a.manifest, b.manifest) };
}
