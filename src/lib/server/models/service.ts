import { createHash } from 'node:crypto';
import { canonical, recordEvent, type Actor } from '../audit';
import { db } from '../db';
import { ServiceError, fieldErrors } from '../errors';
import { enqueueForModelVersion } from '../analyses/queue';
import { analysisStates } from '../verification/service';
import { users } from '../identity/repo';
import {
	activeSiteAdmin,
	models,
	possibleOwners,
	requirementsUsing,
	versions,
	type ModelRow,
	type ModelVersionRow
} from './repo';
import {
	createModelInput,
	modelFile,
	publishInput,
	type CreateModelInput,
	type OperatingPoint,
	type PublishInput
} from './schema';

// Loop models: a named model per project with an owner, and immutable numbered versions. Publishing a
// version queues the re-verification of every requirement that uses it, in the same transaction.

/** SHA-256 of the canonical JSON of a version's content (keys sorted, numbers as JavaScript prints them). */
export function contentHash(content: { operatingPoints: OperatingPoint[] }): string {
	return createHash('sha256').update(canonical(content), 'utf8').digest('hex');
}

export const listModels = (projectId: number) => models.list(db(), projectId);
export const listVersions = (modelId: number) => versions.list(db(), modelId);
export const listRequirementsUsing = (modelId: number) => requirementsUsing(db(), modelId);
export const listPossibleOwners = (projectId: number) => possibleOwners(db(), projectId);

/** The model with this id in this project, or 404. */
export async function getModel(projectId: number, id: number): Promise<ModelRow> {
	const m = await models.byId(db(), id);
	if (!m || Number(m.project_id) !== Number(projectId))
		throw new ServiceError(404, `There is no model ${id} in this project.`);
	return m;
}

/** The project a model belongs to (for guards of routes keyed by a model id). */
export async function modelProjectId(id: number): Promise<number | null> {
	const m = await models.byId(db(), id);
	return m ? Number(m.project_id) : null;
}

export async function getVersion(projectId: number, modelId: number, version: number) {
	await getModel(projectId, modelId);
	const v = await versions.get(db(), modelId, version);
	if (!v) throw new ServiceError(404, `Model ${modelId} has no version ${version}.`);
	return v;
}

export const versionById = (id: number) => versions.byId(db(), id);

export async function createModel(actor: Actor, projectId: number, raw: unknown): Promise<ModelRow> {
	const parsed = createModelInput.safeParse(raw);
	if (!parsed.success) {
		const fields = fieldErrors(parsed.error);
		throw new ServiceError(400, Object.values(fields)[0] ?? 'Invalid model.', fields);
	}
	const input: CreateModelInput = parsed.data;
	const ownerId = input.ownerId ?? actor.userId ?? null;
	const taken = () =>
		new ServiceError(409, `A model named "${input.name}" exists already.`, {
			name: 'This name is taken in this project.'
		});
	try {
		return await insertModel();
	} catch (e) {
		// Two creations of the same name at once: the unique key decides, the loser hears why.
		if ((e as { code?: string }).code === '23505') throw taken();
		throw e;
	}
	function insertModel() {
		return db().transaction(async (trx) => {
			if (ownerId !== null) {
				const owners = await possibleOwners(trx, projectId);
				const admin = await activeSiteAdmin(trx, ownerId);
				if (!owners.some((o) => Number(o.id) === Number(ownerId)) && !admin)
					throw new ServiceError(400, 'The owner must be an analyst of this project.', {
						ownerId: 'Choose an analyst of this project.'
					});
			}
			if (await models.byName(trx, projectId, input.name)) throw taken();
			const m = await models.insert(trx, {
				project_id: projectId,
				name: input.name,
				description: input.description,
				owner_id: ownerId
			});
			await recordEvent(trx, actor, {
				projectId,
				action: 'model.create',
				subjectType: 'model',
				subjectId: m.id,
				after: { name: m.name, description: m.description, ownerId }
			});
			return m;
		});
	}
}

export interface PublishResult {
	version: ModelVersionRow;
	/** False when the content equals the latest version's: nothing was created or queued. */
	created: boolean;
	queued: number;
}

/** Validate a publish body (API JSON, form, or our upload file) into a PublishInput; 400 naming each field. */
export function parsePublish(raw: unknown, { file = false } = {}): PublishInput {
	const r = (file ? modelFile : publishInput).safeParse(raw);
	if (!r.success) {
		const fields = fieldErrors(r.error);
		const first = Object.entries(fields)[0];
		throw new ServiceError(400, first ? `${first[0]}: ${first[1]}` : 'Invalid model version.', fields);
	}
	return { note: r.data.note ?? '', operatingPoints: r.data.operatingPoints };
}

/**
 * Publish a new version of a model. Content equal to the latest version's creates nothing and returns
 * that version. Otherwise the version, its audit event, the analysis runs of every requirement using it
 * and their jobs are written in one transaction.
 */
export async function publishVersion(
	actor: Actor,
	projectId: number,
	modelId: number,
	raw: unknown
): Promise<PublishResult> {
	const input = parsePublish(raw);
	const content = { operatingPoints: input.operatingPoints.map((p) => ({ label: p.label, model: p.model })) };
	// What is stored is what was hashed: the JSON round trip drops anything canonical() would not see.
	const stored = JSON.parse(canonical(content)) as typeof content;
	const hash = contentHash(stored);
	const result = await db().transaction(async (trx) => {
		const m = await models.lockById(trx, modelId);
		if (!m || Number(m.project_id) !== Number(projectId))
			throw new ServiceError(404, `There is no model ${modelId} in this project.`);
		if (m.latest_version > 0) {
			const latest = await versions.get(trx, modelId, m.latest_version);
			if (latest && latest.content_hash === hash) {
				const { author_name: _omit, ...row } = latest;
				void _omit;
				return { version: row as ModelVersionRow, created: false, queued: 0 };
			}
		}
		const v = await versions.insert(trx, {
			model_id: modelId,
			version: m.latest_version + 1,
			note: input.note,
			content: stored,
			content_hash: hash,
			author_id: actor.userId ?? null
		});
		await models.setLatest(trx, modelId, v.version);
		await recordEvent(trx, actor, {
			projectId,
			action: 'model.publish',
			subjectType: 'model-version',
			subjectId: v.id,
			before: m.latest_version > 0 ? { version: m.latest_version } : null,
			after: {
				model: m.name,
				version: v.version,
				contentHash: hash,
				operatingPoints: stored.operatingPoints.map((p) => p.label),
				note: v.note
			}
		});
		const queued = await enqueueForModelVersion(trx, v.id, {
			kind: 'model-publish',
			ref: `model-version:${v.id}`,
			userId: actor.userId ?? null
		});
		return { version: v, created: true, queued };
	});
	return result;
}

/** Everything the model page shows: the model, its owner, versions, and requirements with their states. */
export async function modelOverview(projectId: number, id: number) {
	const m = await getModel(projectId, id);
	const [list, reqs, owner] = await Promise.all([
		versions.list(db(), m.id),
		requirementsUsing(db(), m.id),
		m.owner_id ? users.byId(db(), m.owner_id) : undefined
	]);
	const states = await analysisStates(
		db(),
		reqs.map((r) => Number(r.id))
	);
	return {
		model: m,
		owner: owner ? { name: owner.display_name, email: owner.email } : null,
		versions: list,
		requirements: reqs.map((r) => ({
			...r,
			state: states.get(Number(r.id))?.state ?? ('not-analysed' as const)
		}))
	};
}
