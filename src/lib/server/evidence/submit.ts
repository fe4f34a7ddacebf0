import { db } from '../db';
import { ServiceError, parseOrThrow } from '../errors';
import { evidenceRepo as repo } from './repo';
import {
	type UploadInput,
	type UploadResult,
	parseMeasured,
	receiveUpload,
	resolveRequirements,
	storeRevision,
	withStoredObject
} from './revision';
import { agreementFindingsAfterCommit } from './review';
import { revisionFields, uploadFields } from './schema';

// Submitting evidence: a new item (its first revision) or a new revision of an item. Both receive the
// file the same way and store the revision with the one helper (revision.ts storeRevision).

export async function projectRequirements(projectId: number) {
	const rows = await repo.projectRequirements(db(), projectId);
	return rows.map((r) => ({ id: Number(r.id), identifier: r.identifier, title: r.title ?? '' }));
}

/** A new evidence item from a multipart request (fields + `file`). */
export async function uploadEvidence(input: UploadInput): Promise<UploadResult> {
	const { store, fields, file } = await receiveUpload(input);
	return withStoredObject(store, file, fields, async (f) => {
		const v = parseOrThrow(uploadFields, fields);
		const requirements = await resolveRequirements(input.project.id, v.requirementIds);
		const measured = v.kind === 'frequency-response' ? parseMeasured(f, v) : null;
		const meta = {
			title: v.title,
			kind: v.kind,
			method: v.method,
			test_article: v.testArticle,
			test_date: v.testDate ?? null,
			note: v.note
		};
		const stored = await db().transaction(async (trx) => {
			const item = await repo.insertItem(trx, {
				project_id: input.project.id,
				created_by: input.actor.userId ?? null
			});
			return storeRevision(trx, {
				project: input.project,
				actor: input.actor,
				evidenceId: item.id,
				revision: 1,
				file: f,
				meta,
				measured,
				requirements
			});
		});
		if (measured)
			await agreementFindingsAfterCommit(input.actor, input.project.id, stored.id, stored.revision);
		return stored;
	});
}

const FROZEN =
	'This evidence is accepted and frozen: it cannot be replaced or changed. Upload new evidence instead.';

/** A new file revision of an existing item; superseded revisions stay as they were. */
export async function reviseEvidence(input: UploadInput & { evidenceId: number }): Promise<UploadResult> {
	// Refuse early (before receiving a file) when the item is frozen; the database refuses too.
	if (await repo.hasAccepted(db(), input.evidenceId)) throw new ServiceError(409, FROZEN);
	const { store, fields, file } = await receiveUpload(input);
	return withStoredObject(store, file, fields, async (f) => {
		const v = parseOrThrow(revisionFields, fields);
		const stored = await db().transaction(async (trx) => {
			const item = await repo.lockItem(trx, input.evidenceId);
			if (!item || item.project_id !== input.project.id)
				throw new ServiceError(404, `There is no evidence ${input.evidenceId}.`);
			if (await repo.hasAccepted(trx, item.id)) throw new ServiceError(409, FROZEN);
			const prev = (await repo.file(trx, item.id, item.current_revision))!;
			const requirements = v.requirementIds
				? await resolveRequirements(input.project.id, v.requirementIds)
				: await repo.linksOfFiles(trx, [prev.id]);
			const meta = {
				title: v.title ?? prev.title,
				kind: v.kind ?? prev.kind,
				method: v.method ?? prev.method,
				test_article: v.testArticle ?? prev.test_article,
				test_date: v.testDate ?? prev.test_date,
				note: v.note
			};
			const measured = meta.kind === 'frequency-response' ? parseMeasured(f, v) : null;
			return storeRevision(trx, {
				project: input.project,
				actor: input.actor,
				evidenceId: item.id,
				revision: item.current_revision + 1,
				file: f,
				meta,
				measured,
				requirements,
				before: prev
			});
		});
		if (stored.measuredPoints)
			await agreementFindingsAfterCommit(input.actor, input.project.id, stored.id, stored.revision);
		return stored;
	});
}
