import { createHash } from 'node:crypto';
import { ENGINE_VERSION } from '../../stability/index';
import { blocksFreeze, freezeBlockedSentence } from '../../verification/index';
import { canonical, recordEvent, type Actor } from '../audit';
import { db } from '../db';
import { ServiceError } from '../errors';
import { snapshot, type Snapshot } from '../trace/service';
import { compareSnapshots, type Comparison } from './compare';
import { baselines, type BaselineRow, type BaselineSummary } from './repo';
import { freezeForm } from './schema';

// Baselines: a certifier freezes the project. The manifest is the project's snapshot (every current
// requirement revision with its content hash, trace links, model versions with their hashes, the latest
// analysis run per requirement with its output hash, every evidence revision with its SHA-256 and review
// state, the engine version); its own SHA-256 is taken over its canonical JSON (keys sorted, no
// whitespace: audit.ts canonical()), so the same state always gives the same hash.

export type Manifest = Snapshot;

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
export async function currentManifest(
	projectId: number
): Promise<{ manifest: Manifest; hash: string; blockers: Blocker[] }> {
	const manifest = normalise(await snapshot(projectId));
	return { manifest, hash: manifestHash(manifest), blockers: blockersOf(manifest) };
}

/** What jsonb gives back is what is hashed: a JSON round trip drops undefined and turns Infinity into null. */
function normalise(m: Manifest): Manifest {
	return JSON.parse(canonical(m)) as Manifest;
}

export const listBaselines = (projectId: number) => baselines.list(db(), projectId);

export async function getBaseline(
	projectId: number,
	id: number
): Promise<BaselineRow & { manifest: Manifest; verified: boolean }> {
	const row = await baselines.byId(db(), projectId, id);
	if (!row) throw new ServiceError(404, `There is no baseline ${id} in this project.`);
	const manifest = row.manifest as Manifest;
	return { ...row, manifest, verified: manifestHash(manifest) === row.manifest_hash };
}

export async function freeze(actor: Actor, projectId: number, raw: unknown): Promise<BaselineSummary> {
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
				const manifest = normalise(await snapshot(projectId, undefined, trx));
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
				await recordEvent(trx, actor, {
					projectId,
					action: 'baseline.freeze',
					subjectType: 'baseline',
					subjectId: row.id,
					after: { number, label: row.label, manifestHash: hash, requirements: row.requirement_count }
				});
				return row;
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
