import type { Knex } from 'knex';
import { type Actor, recordEvent } from '../audit';
import { config } from '../config';
import { db } from '../db';
import { ServiceError } from '../errors';
import { type ObjectStore, isStorageUnavailable, objectStore } from '../storage';
import { type MeasuredResponse, ResponseParseError, parseFrequencyResponse } from './frequency-response';
import { type FileRow, type RequirementRef, evidenceRepo as repo } from './repo';
import { STORAGE_DOWN, type StoredUpload, receiveMultipart } from './upload';

// What uploading an item and revising it share: receiving the multipart body into the object store,
// removing the object when anything after that fails, and storeRevision(), the one writer of an
// evidence revision (file row, "verifies" links, current revision, audit event).

export interface ProjectRef {
	id: number;
	key: string;
}

export interface UploadInput {
	project: ProjectRef;
	actor: Actor;
	headers: Headers;
	body: ReadableStream<Uint8Array> | null;
	store?: ObjectStore;
}

export interface UploadResult {
	id: number;
	revision: number;
	title: string;
	kind: string;
	method: string;
	testArticle: string;
	testDate: string | null;
	originalName: string;
	contentType: string;
	size: number;
	sha256: string;
	requirements: { id: number; identifier: string }[];
	measuredPoints: number | null;
}

/** The descriptive fields of a revision, as stored on its file row. */
export interface RevisionMeta {
	title: string;
	kind: FileRow['kind'];
	method: FileRow['method'];
	test_article: string;
	test_date: string | null;
	note: string;
}

export function keyPrefix(project: ProjectRef) {
	return `projects/${project.key}/evidence`;
}

export function storageError(e: unknown): never {
	if (isStorageUnavailable(e)) throw new ServiceError(503, STORAGE_DOWN);
	throw e;
}

/** "SYS-1, 12" -> ids and identifiers; every one must name a requirement of the project. */
export async function resolveRequirements(projectId: number, text: string): Promise<RequirementRef[]> {
	const parts = [
		...new Set(
			text
				.split(/[,;\s]+/)
				.map((s) => s.trim())
				.filter(Boolean)
		)
	];
	if (parts.length === 0) {
		throw new ServiceError(400, 'Name at least one requirement this evidence verifies.', {
			requirementIds: 'Name at least one requirement this evidence verifies.'
		});
	}
	const ids = parts.filter((p) => /^[1-9][0-9]{0,14}$/.test(p)).map(Number);
	const identifiers = parts.filter((p) => !/^[1-9][0-9]{0,14}$/.test(p));
	const found = await repo.requirementsByRef(db(), projectId, ids, identifiers);
	const missing = parts.filter(
		(p) => !found.some((r) => String(r.id) === p || r.identifier.toUpperCase() === p.toUpperCase())
	);
	if (missing.length) {
		const msg = `No requirement ${missing.join(', ')} in this project.`;
		throw new ServiceError(400, msg, { requirementIds: msg });
	}
	return found;
}

export function parseMeasured(
	file: StoredUpload,
	fields: { frequencyUnit?: string; magnitudeUnit?: string; layout?: string }
): MeasuredResponse {
	if (file.kind !== 'csv' && file.kind !== 'txt') {
		const msg = 'A measured frequency response must be a CSV or text file.';
		throw new ServiceError(415, msg, { file: msg });
	}
	if (file.text === null) {
		const msg = 'A measured frequency response file may be at most 8 MiB.';
		throw new ServiceError(413, msg, { file: msg });
	}
	try {
		return parseFrequencyResponse(file.text, fields as Parameters<typeof parseFrequencyResponse>[1]);
	} catch (e) {
		if (e instanceof ResponseParseError) {
			// Every problem found, under the field to fix (one per line), so a garbled file is fixed in one go.
			const fields: Record<string, string> = {};
			for (const p of e.problems)
				fields[p.field] = fields[p.field] ? `${fields[p.field]}\n${p.message}` : p.message;
			if (e.more) fields.file = `${fields.file ? `${fields.file}\n` : ''}…and ${e.more} more.`;
			const total = e.problems.length + e.more;
			throw new ServiceError(
				422,
				total === 1
					? e.message
					: `The file was refused: ${total} problems, listed by field. First: ${e.message}`,
				fields,
				{
					row: e.row,
					column: e.column,
					needs: e.field === 'file' ? undefined : e.field,
					problems: e.problems,
					more: e.more
				}
			);
		}
		throw e;
	}
}

function serialiseResponse(r: MeasuredResponse): string {
	return JSON.stringify({
		layout: r.layout,
		units: r.units,
		delimiter: r.delimiter,
		header: r.header,
		points: r.points
	});
}

/** The text fields of a failed upload, so a form can show them again (the file itself is never kept). */
export const submittedFields = new WeakMap<object, Record<string, string>>();

export async function withStoredObject<T>(
	store: ObjectStore,
	file: StoredUpload | null,
	fields: Record<string, string>,
	work: (file: StoredUpload) => Promise<T>
): Promise<T> {
	if (!file) {
		const e = new ServiceError(400, 'Choose a file to upload.', { file: 'Choose a file to upload.' });
		submittedFields.set(e, fields);
		throw e;
	}
	try {
		return await work(file);
	} catch (e) {
		if (e && typeof e === 'object') submittedFields.set(e, fields);
		// The database row could not be written (or the fields were wrong): the object must not stay.
		await store.remove(file.storageKey).catch((err) => {
			console.error(`[evidence] could not remove ${file.storageKey} after a failed upload:`, err);
		});
		throw e;
	}
}

/** Receive the multipart body: its text fields and the file, already streamed to the object store. */
export async function receiveUpload(input: UploadInput) {
	const store = input.store ?? objectStore();
	const { fields, file } = await receiveMultipart({
		headers: input.headers,
		body: input.body,
		store,
		keyPrefix: keyPrefix(input.project),
		maxBytes: config.evidenceMaxBytes
	});
	return { store, fields, file };
}

/**
 * Store one revision of an item (in the caller's transaction): its file row, its "verifies" links,
 * the item's current revision, and the audit event (`evidence.upload` for the first revision,
 * `evidence.revise` after, with the superseded revision as `before`).
 */
export async function storeRevision(
	trx: Knex.Transaction,
	o: {
		project: ProjectRef;
		actor: Actor;
		evidenceId: number;
		revision: number;
		file: StoredUpload;
		meta: RevisionMeta;
		measured: MeasuredResponse | null;
		requirements: RequirementRef[];
		before?: FileRow;
	}
): Promise<UploadResult> {
	const f = o.file;
	const fileId = await repo.insertFile(trx, {
		evidence_id: o.evidenceId,
		revision: o.revision,
		...o.meta,
		original_name: f.originalName,
		storage_key: f.storageKey,
		content_type: f.contentType,
		size_bytes: f.size,
		sha256: f.sha256,
		response: o.measured ? serialiseResponse(o.measured) : null,
		uploaded_by: o.actor.userId ?? null,
		uploaded_by_label: o.actor.label
	});
	await repo.insertLinks(
		trx,
		fileId,
		o.requirements.map((r) => r.id)
	);
	if (o.revision > 1) await repo.setCurrentRevision(trx, o.evidenceId, o.revision);
	await recordEvent(trx, o.actor, {
		projectId: o.project.id,
		action: o.revision === 1 ? 'evidence.upload' : 'evidence.revise',
		subjectType: 'evidence',
		subjectId: o.evidenceId,
		...(o.before
			? {
					before: {
						revision: o.before.revision,
						sha256: o.before.sha256,
						originalName: o.before.original_name
					}
				}
			: {}),
		after: {
			revision: o.revision,
			...o.meta,
			originalName: f.originalName,
			size: f.size,
			sha256: f.sha256,
			storageKey: f.storageKey,
			requirements: o.requirements.map((r) => r.identifier)
		}
	});
	return {
		id: o.evidenceId,
		revision: o.revision,
		title: o.meta.title,
		kind: o.meta.kind,
		method: o.meta.method,
		testArticle: o.meta.test_article,
		testDate: o.meta.test_date,
		originalName: f.originalName,
		contentType: f.contentType,
		size: f.size,
		sha256: f.sha256,
		requirements: o.requirements.map((r) => ({ id: r.id, identifier: r.identifier })),
		measuredPoints: o.measured ? o.measured.points.length : null
	};
}
