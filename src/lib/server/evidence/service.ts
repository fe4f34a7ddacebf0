import { createHash } from 'node:crypto';
import type { Readable } from 'node:stream';
import {
	type Check,
	type Model,
	checkSchema,
	modelSchema,
	nyquistCurve,
	regionMargin
} from '../../stability/index';
import { type DecisionRegion, decisionRegions, testedCheck } from '../../verification/decision';
import { type Actor, historyOf, recordEvent } from '../audit';
import { config } from '../config';
import { db } from '../db';
import { ServiceError, parseOrThrow } from '../errors';
import type { Role } from '../identity/roles';
import { ObjectNotFoundError, type ObjectStore, isStorageUnavailable, objectStore } from '../storage';
import {
	type Agreement,
	DEFAULT_TOLERANCE,
	type SampledCheck,
	agreement,
	sampledSectorCheck
} from './comparison';
import { type MeasuredResponse, ResponseParseError, parseFrequencyResponse } from './frequency-response';
import { type FileRow, type RequirementRef, evidenceRepo as repo } from './repo';
import {
	type Decision,
	type ListFilters,
	SIGN_OFF_MEANING,
	listFilters,
	reviewForm,
	revisionFields,
	toleranceForm,
	uploadFields
} from './schema';
import { STORAGE_DOWN, type StoredUpload, receiveMultipart } from './upload';

// Evidence: upload (streamed to the object store, then one transaction for the rows and the audit
// event; the object is removed if the transaction fails), revisions, review, integrity check, and the
// comparison of measured frequency responses with the specification and model.

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

function keyPrefix(project: ProjectRef) {
	return `projects/${project.key}/evidence`;
}

function storageError(e: unknown): never {
	if (isStorageUnavailable(e)) throw new ServiceError(503, STORAGE_DOWN);
	throw e;
}

/** "SYS-1, 12" -> ids and identifiers; every one must name a requirement of the project. */
async function resolveRequirements(projectId: number, text: string): Promise<RequirementRef[]> {
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

function parseMeasured(
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

async function withStoredObject<T>(
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

function fileRow(
	evidenceId: number,
	revision: number,
	f: StoredUpload,
	meta: {
		title: string;
		kind: FileRow['kind'];
		method: FileRow['method'];
		test_article: string;
		test_date: string | null;
		note: string;
	},
	actor: Actor,
	response: MeasuredResponse | null
) {
	return {
		evidence_id: evidenceId,
		revision,
		...meta,
		original_name: f.originalName,
		storage_key: f.storageKey,
		content_type: f.contentType,
		size_bytes: f.size,
		sha256: f.sha256,
		response: response ? serialiseResponse(response) : null,
		uploaded_by: actor.userId ?? null,
		uploaded_by_label: actor.label
	};
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

export async function projectRequirements(projectId: number) {
	const rows = await repo.projectRequirements(db(), projectId);
	return rows.map((r) => ({ id: Number(r.id), identifier: r.identifier, title: r.title ?? '' }));
}

/** A new evidence item from a multipart request (fields + `file`). */
export async function uploadEvidence(input: UploadInput): Promise<UploadResult> {
	const store = input.store ?? objectStore();
	const { fields, file } = await receiveMultipart({
		headers: input.headers,
		body: input.body,
		store,
		keyPrefix: keyPrefix(input.project),
		maxBytes: config.evidenceMaxBytes
	});
	return withStoredObject(store, file, fields, async (f) => {
		const v = parseOrThrow(uploadFields, fields);
		const reqs = await resolveRequirements(input.project.id, v.requirementIds);
		const measured = v.kind === 'frequency-response' ? parseMeasured(f, v) : null;
		const meta = {
			title: v.title,
			kind: v.kind,
			method: v.method,
			test_article: v.testArticle,
			test_date: v.testDate ?? null,
			note: v.note
		};
		const id = await db().transaction(async (trx) => {
			const item = await repo.insertItem(trx, {
				project_id: input.project.id,
				created_by: input.actor.userId ?? null
			});
			const fileId = await repo.insertFile(trx, fileRow(item.id, 1, f, meta, input.actor, measured));
			await repo.insertLinks(
				trx,
				fileId,
				reqs.map((r) => r.id)
			);
			await recordEvent(trx, input.actor, {
				projectId: input.project.id,
				action: 'evidence.upload',
				subjectType: 'evidence',
				subjectId: item.id,
				after: {
					revision: 1,
					...meta,
					originalName: f.originalName,
					size: f.size,
					sha256: f.sha256,
					storageKey: f.storageKey,
					requirements: reqs.map((r) => r.identifier)
				}
			});
			return item.id;
		});
		return {
			id,
			revision: 1,
			title: meta.title,
			kind: meta.kind,
			method: meta.method,
			testArticle: meta.test_article,
			testDate: meta.test_date,
			originalName: f.originalName,
			contentType: f.contentType,
			size: f.size,
			sha256: f.sha256,
			requirements: reqs.map((r) => ({ id: r.id, identifier: r.identifier })),
			measuredPoints: measured ? measured.points.length : null
		};
	});
}

const FROZEN =
	'This evidence is accepted and frozen: it cannot be replaced or changed. Upload new evidence instead.';

/** A new file revision of an existing item; superseded revisions stay as they were. */
export async function reviseEvidence(input: UploadInput & { evidenceId: number }): Promise<UploadResult> {
	const store = input.store ?? objectStore();
	// Refuse early (before receiving a file) when the item is frozen; the database refuses too.
	if (await repo.hasAccepted(db(), input.evidenceId)) throw new ServiceError(409, FROZEN);
	const { fields, file } = await receiveMultipart({
		headers: input.headers,
		body: input.body,
		store,
		keyPrefix: keyPrefix(input.project),
		maxBytes: config.evidenceMaxBytes
	});
	return withStoredObject(store, file, fields, async (f) => {
		const v = parseOrThrow(revisionFields, fields);
		return db().transaction(async (trx) => {
			const item = await repo.lockItem(trx, input.evidenceId);
			if (!item || item.project_id !== input.project.id)
				throw new ServiceError(404, `There is no evidence ${input.evidenceId}.`);
			if (await repo.hasAccepted(trx, item.id)) throw new ServiceError(409, FROZEN);
			const prev = (await repo.file(trx, item.id, item.current_revision))!;
			const prevLinks = await repo.linksOfFiles(trx, [prev.id]);
			const reqs = v.requirementIds
				? await resolveRequirements(input.project.id, v.requirementIds)
				: prevLinks;
			const meta = {
				title: v.title ?? prev.title,
				kind: v.kind ?? prev.kind,
				method: v.method ?? prev.method,
				test_article: v.testArticle ?? prev.test_article,
				test_date: v.testDate ?? prev.test_date,
				note: v.note
			};
			const measured = meta.kind === 'frequency-response' ? parseMeasured(f, v) : null;
			const revision = item.current_revision + 1;
			const fileId = await repo.insertFile(trx, fileRow(item.id, revision, f, meta, input.actor, measured));
			await repo.insertLinks(
				trx,
				fileId,
				reqs.map((r) => r.id)
			);
			await repo.setCurrentRevision(trx, item.id, revision);
			await recordEvent(trx, input.actor, {
				projectId: input.project.id,
				action: 'evidence.revise',
				subjectType: 'evidence',
				subjectId: item.id,
				before: { revision: prev.revision, sha256: prev.sha256, originalName: prev.original_name },
				after: {
					revision,
					...meta,
					originalName: f.originalName,
					size: f.size,
					sha256: f.sha256,
					storageKey: f.storageKey,
					requirements: reqs.map((r) => r.identifier)
				}
			});
			return {
				id: item.id,
				revision,
				title: meta.title,
				kind: meta.kind,
				method: meta.method,
				testArticle: meta.test_article,
				testDate: meta.test_date,
				originalName: f.originalName,
				contentType: f.contentType,
				size: f.size,
				sha256: f.sha256,
				requirements: reqs.map((r) => ({ id: r.id, identifier: r.identifier })),
				measuredPoints: measured ? measured.points.length : null
			};
		});
	});
}

export type ReviewState = 'pending' | Decision;

export interface EvidenceDetail {
	id: number;
	projectId: number;
	currentRevision: number;
	frozen: boolean;
	reviewState: ReviewState;
	revisions: {
		revision: number;
		fileId: number;
		title: string;
		kind: FileRow['kind'];
		method: FileRow['method'];
		testArticle: string;
		testDate: string | null;
		note: string;
		originalName: string;
		contentType: string;
		size: number;
		sha256: string;
		uploadedBy: string;
		uploadedById: number | null;
		uploadedAt: string;
		requirements: { id: number; identifier: string; title: string | null; currentSpecId: number | null }[];
		review: {
			decision: Decision;
			comment: string;
			meaning: string;
			reviewer: string;
			role: string;
			at: string;
			sha256: string;
		} | null;
		measuredPoints: number | null;
	}[];
}

export async function getEvidence(evidenceId: number): Promise<EvidenceDetail> {
	const item = await repo.item(db(), evidenceId);
	if (!item) throw new ServiceError(404, `There is no evidence ${evidenceId}.`);
	const files = await repo.files(db(), evidenceId);
	const [links, reviews] = await Promise.all([
		repo.linksOfFiles(
			db(),
			files.map((f) => f.id)
		),
		repo.reviews(db(), evidenceId)
	]);
	const revisions = files.map((f) => {
		const r = reviews.find((x) => x.evidence_file_id === f.id);
		const resp = f.response as { points?: unknown[] } | null;
		return {
			revision: f.revision,
			fileId: f.id,
			title: f.title,
			kind: f.kind,
			method: f.method,
			testArticle: f.test_article,
			testDate: f.test_date,
			note: f.note,
			originalName: f.original_name,
			contentType: f.content_type,
			size: Number(f.size_bytes),
			sha256: f.sha256,
			uploadedBy: f.uploaded_by_label,
			uploadedById: f.uploaded_by,
			uploadedAt: new Date(f.uploaded_at).toISOString(),
			requirements: links
				.filter((l) => l.evidence_file_id === f.id)
				.map((l) => ({
					id: Number(l.id),
					identifier: l.identifier,
					title: l.title,
					currentSpecId: l.current_spec_id
				})),
			review: r
				? {
						decision: r.decision,
						comment: r.comment,
						meaning: r.meaning,
						reviewer: r.reviewer_label,
						role: r.reviewer_role,
						at: new Date(r.reviewed_at).toISOString(),
						sha256: r.sha256
					}
				: null,
			measuredPoints: resp?.points ? resp.points.length : null
		};
	});
	const current = revisions.find((r) => r.revision === item.current_revision)!;
	return {
		id: item.id,
		projectId: item.project_id,
		currentRevision: item.current_revision,
		frozen: revisions.some((r) => r.review?.decision === 'accepted'),
		reviewState: current.review?.decision ?? 'pending',
		revisions
	};
}

export async function listEvidence(projectId: number, raw: Record<string, string | undefined>) {
	const f: ListFilters = listFilters.parse(raw);
	let requirementId: number | undefined;
	if (f.requirement) {
		const found = await repo.requirementsByRef(
			db(),
			projectId,
			/^[1-9][0-9]{0,14}$/.test(f.requirement) ? [Number(f.requirement)] : [],
			/^[1-9][0-9]{0,14}$/.test(f.requirement) ? [] : [f.requirement]
		);
		// An unknown requirement filters everything out rather than being ignored.
		requirementId = found[0]?.id ?? -1;
	}
	const rows = await repo.list(db(), projectId, { kind: f.kind, review: f.review, requirementId });
	return {
		filters: f,
		rows: rows.map((r) => ({
			id: Number(r.id),
			revision: r.revision,
			title: r.title,
			kind: r.kind,
			method: r.method,
			testArticle: r.test_article,
			testDate: r.test_date,
			originalName: r.original_name,
			size: Number(r.size_bytes),
			sha256: r.sha256,
			uploadedBy: r.uploaded_by_label,
			uploadedAt: new Date(r.uploaded_at).toISOString(),
			reviewState: (r.decision ?? 'pending') as ReviewState,
			reviewedAt: r.reviewed_at ? new Date(r.reviewed_at).toISOString() : null,
			reviewer: r.reviewer_label,
			requirements: r.requirements.map((x) => ({ id: Number(x.id), identifier: x.identifier }))
		}))
	};
}

/** Accept or reject the current revision. One decision per revision; the uploader may not review it. */
export async function reviewEvidence(input: {
	evidenceId: number;
	project: ProjectRef;
	actor: Actor;
	role: Role | 'admin';
	fields: Record<string, unknown>;
}) {
	const v = parseOrThrow(reviewForm, input.fields);
	return db().transaction(async (trx) => {
		const item = await repo.lockItem(trx, input.evidenceId);
		if (!item || item.project_id !== input.project.id)
			throw new ServiceError(404, `There is no evidence ${input.evidenceId}.`);
		if (v.revision !== item.current_revision) {
			throw new ServiceError(
				409,
				`Revision ${v.revision} is superseded by revision ${item.current_revision}; review the current one.`,
				{
					revision: 'Not the current revision.'
				}
			);
		}
		const file = (await repo.file(trx, item.id, item.current_revision))!;
		const existing = (await repo.reviews(trx, item.id)).find((r) => r.evidence_file_id === file.id);
		if (existing) {
			throw new ServiceError(
				409,
				`Revision ${file.revision} was already ${existing.decision} by ${existing.reviewer_label}.`
			);
		}
		if (file.uploaded_by !== null && file.uploaded_by === input.actor.userId) {
			throw new ServiceError(409, 'You uploaded this revision; another certifier must review it.');
		}
		const review = await repo.insertReview(trx, {
			evidence_file_id: file.id,
			decision: v.decision,
			comment: v.comment,
			meaning: SIGN_OFF_MEANING[v.decision],
			reviewer_id: input.actor.userId ?? null,
			reviewer_label: input.actor.label,
			reviewer_role: input.role,
			sha256: file.sha256
		});
		await recordEvent(trx, input.actor, {
			projectId: input.project.id,
			action: 'evidence.review',
			subjectType: 'evidence',
			subjectId: item.id,
			before: { revision: file.revision, state: 'pending' },
			after: {
				revision: file.revision,
				decision: v.decision,
				comment: v.comment,
				meaning: review.meaning,
				sha256: file.sha256
			}
		});
		return {
			decision: review.decision,
			revision: file.revision,
			meaning: review.meaning,
			at: new Date(review.reviewed_at).toISOString()
		};
	});
}

async function fileOf(evidenceId: number, revision?: number): Promise<FileRow> {
	const item = await repo.item(db(), evidenceId);
	if (!item) throw new ServiceError(404, `There is no evidence ${evidenceId}.`);
	const file = await repo.file(db(), evidenceId, revision ?? item.current_revision);
	if (!file) throw new ServiceError(404, `Evidence ${evidenceId} has no revision ${revision}.`);
	return file;
}

export function parseRevision(v: string | null): number | undefined {
	if (v === null || v === '') return undefined;
	if (!/^[1-9][0-9]{0,6}$/.test(v))
		throw new ServiceError(400, 'revision must be a positive whole number.', {
			revision: 'Not a revision number.'
		});
	return Number(v);
}

/** The stored file as a stream, for a download or an inline view. */
export async function openFile(evidenceId: number, revision?: number, store = objectStore()) {
	const file = await fileOf(evidenceId, revision);
	try {
		const obj = await store.get(file.storage_key);
		return { file, body: obj.body };
	} catch (e) {
		if (e instanceof ObjectNotFoundError) {
			throw new ServiceError(
				404,
				`The file of evidence ${evidenceId} revision ${file.revision} is missing from the evidence store.`
			);
		}
		return storageError(e);
	}
}

async function hashStream(body: Readable): Promise<{ sha256: string; size: number }> {
	const h = createHash('sha256');
	let size = 0;
	for await (const chunk of body) {
		h.update(chunk as Buffer);
		size += (chunk as Buffer).length;
	}
	return { sha256: h.digest('hex'), size };
}

export interface IntegrityResult {
	revision: number;
	expected: string;
	actual: string | null;
	expectedSize: number;
	actualSize: number | null;
	match: boolean;
	checkedAt: string;
	message: string;
}

/** Re-read the stored object and recompute its SHA-256 (FIPS 180-4) against the recorded one. */
export async function checkIntegrity(input: {
	evidenceId: number;
	revision?: number;
	project: ProjectRef;
	actor: Actor;
	store?: ObjectStore;
}): Promise<IntegrityResult> {
	const store = input.store ?? objectStore();
	const file = await fileOf(input.evidenceId, input.revision);
	let actual: { sha256: string; size: number } | null = null;
	try {
		actual = await hashStream((await store.get(file.storage_key)).body);
	} catch (e) {
		if (!(e instanceof ObjectNotFoundError)) storageError(e);
	}
	const match = !!actual && actual.sha256 === file.sha256 && actual.size === Number(file.size_bytes);
	const result: IntegrityResult = {
		revision: file.revision,
		expected: file.sha256,
		actual: actual?.sha256 ?? null,
		expectedSize: Number(file.size_bytes),
		actualSize: actual?.size ?? null,
		match,
		checkedAt: new Date().toISOString(),
		message: match
			? `The stored file matches its recorded SHA-256 (${file.sha256}).`
			: actual
				? `MISMATCH: the stored file's SHA-256 is ${actual.sha256} (${actual.size} bytes), but ${file.sha256} (${file.size_bytes} bytes) was recorded at upload. The file has changed in storage.`
				: 'MISMATCH: the stored file is missing from the evidence store.'
	};
	await db().transaction((trx) =>
		recordEvent(trx, input.actor, {
			projectId: input.project.id,
			action: 'evidence.integrity-check',
			subjectType: 'evidence',
			subjectId: input.evidenceId,
			after: { revision: result.revision, match, expected: result.expected, actual: result.actual }
		})
	);
	return result;
}

export async function evidenceHistory(evidenceId: number) {
	const rows = await historyOf(db(), 'evidence', evidenceId, 100);
	return rows.map((r) => ({
		seq: r.seq,
		at: new Date(r.at).toISOString(),
		actor: r.actor_label,
		action: r.action,
		after: r.after
	}));
}

export async function toleranceFor(requirementId: number) {
	const t = await repo.tolerance(db(), requirementId);
	return t
		? { relativeError: t.relative_error, phaseDeg: t.phase_deg, isDefault: false }
		: { ...DEFAULT_TOLERANCE, isDefault: true };
}

export async function setTolerance(input: {
	project: ProjectRef;
	actor: Actor;
	fields: Record<string, unknown>;
}) {
	const v = parseOrThrow(toleranceForm, input.fields);
	const [req] = await repo.requirementsByRef(db(), input.project.id, [v.requirementId], []);
	if (!req)
		throw new ServiceError(404, `No requirement ${v.requirementId} in this project.`, {
			requirementId: 'Unknown requirement.'
		});
	const before = await toleranceFor(req.id);
	const after = { relativeError: v.relativeErrorPct / 100, phaseDeg: v.phaseDeg };
	await db().transaction(async (trx) => {
		await repo.upsertTolerance(trx, {
			requirement_id: req.id,
			relative_error: after.relativeError,
			phase_deg: after.phaseDeg,
			updated_by: input.actor.userId ?? null
		});
		await recordEvent(trx, input.actor, {
			projectId: input.project.id,
			action: 'requirement.evidence-tolerance',
			subjectType: 'requirement',
			subjectId: req.id,
			before: { relativeError: before.relativeError, phaseDeg: before.phaseDeg },
			after
		});
	});
	return { requirement: req.identifier, ...after };
}

export interface RequirementComparison {
	requirement: { id: number; identifier: string; title: string | null };
	/** Why there is nothing to compare (no specification, no model version ...), or null. */
	missing: string | null;
	spec: { id: number; version: number; check: Check } | null;
	model: { id: number; name: string; versionId: number; version: number; hash: string } | null;
	sampled: SampledCheck | null;
	tolerance: { relativeError: number; phaseDeg: number; isDefault: boolean };
	agreement: Agreement[];
	plot: {
		/** The region sampled against (the sector widened by the required margin) and the stated one. */
		regions: DecisionRegion[];
		modelCurves: { label: string; points: { re: number; im: number }[] }[];
		measured: { w: number; re: number; im: number; ok: boolean | null }[];
	};
}

/** For a measured-frequency-response revision: sampled sector check and agreement per linked requirement. */
export async function compareMeasured(
	evidenceId: number,
	revision?: number
): Promise<RequirementComparison[]> {
	const file = await fileOf(evidenceId, revision);
	const resp = file.response as MeasuredResponse | null;
	if (!resp) return [];
	const links = await repo.linksOfFiles(db(), [file.id]);
	const out: RequirementComparison[] = [];
	for (const l of links) {
		const tolerance = await toleranceFor(Number(l.id));
		const base: RequirementComparison = {
			requirement: { id: Number(l.id), identifier: l.identifier, title: l.title },
			missing: null,
			spec: null,
			model: null,
			sampled: null,
			tolerance,
			agreement: [],
			plot: {
				regions: [],
				modelCurves: [],
				measured: resp.points.map((p) => ({ w: p.w, re: p.re, im: p.im, ok: null }))
			}
		};
		if (!l.current_spec_id) {
			out.push({ ...base, missing: 'The requirement has no stability specification yet.' });
			continue;
		}
		const s = await repo.specWithModel(db(), l.current_spec_id);
		const check = s ? checkSchema.safeParse(s.check) : null;
		if (!s || !check?.success) {
			out.push({ ...base, missing: 'The specification could not be read.' });
			continue;
		}
		base.spec = { id: s.spec_id, version: s.spec_version, check: check.data };
		// Sampled against the sector the analysis decides with (the required margin applied), like the run.
		const tested = testedCheck(check.data, s.required_margin).decide;
		const sampled = sampledSectorCheck(resp.points, tested);
		base.sampled = sampled;
		if (check.data.type === 'circle' || check.data.type === 'popov') {
			base.plot.regions = decisionRegions(check.data, tested, s.required_margin);
		} else if (check.data.type === 'positive-real') {
			base.plot.regions = [
				{
					role: 'tested',
					sector: [0, Infinity],
					geometry: { kind: 'half-plane', boundary: 0, curveMust: 'stay-right' },
					label: 'positive real: Re G(jω) > 0'
				}
			];
		}
		if (sampled.region) {
			const region = sampled.region;
			base.plot.measured = resp.points.map((p) => {
				const m = regionMargin(region, p.re, p.im);
				return { w: p.w, re: p.re, im: p.im, ok: m > 0 };
			});
		}
		if (!s.model_version_id || s.model_version === null) {
			out.push({ ...base, missing: `Model ${s.model_name} has no version yet.` });
			continue;
		}
		base.model = {
			id: s.model_id,
			name: s.model_name,
			versionId: s.model_version_id,
			version: s.model_version,
			hash: s.model_hash ?? ''
		};
		const content = s.model_content as { operatingPoints?: { label: string; model: unknown }[] } | null;
		const points = (content?.operatingPoints ?? []).filter(
			(p) => !s.operating_points || s.operating_points.includes(p.label)
		);
		const wMin = resp.points[0].w;
		const wMax = resp.points[resp.points.length - 1].w;
		for (const op of points) {
			const m = modelSchema.safeParse(op.model);
			if (!m.success) continue;
			const model: Model = m.data;
			base.agreement.push(agreement(resp.points, model, tolerance, op.label));
			try {
				const curve = nyquistCurve(model, { wMin: wMin / 10, wMax: wMax * 10, maxPoints: 800 });
				base.plot.modelCurves.push({ label: op.label, points: curve.map((c) => ({ re: c.re, im: c.im })) });
			} catch {
				// A model the engine cannot draw still has its agreement figures.
			}
		}
		out.push(base);
	}
	return out;
}
