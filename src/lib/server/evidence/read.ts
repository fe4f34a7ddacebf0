import { historyOf } from '../audit';
import { db } from '../db';
import { ServiceError } from '../errors';
import { ObjectNotFoundError, objectStore } from '../storage';
import { type FileRow, evidenceRepo as repo } from './repo';
import { storageError } from './revision';
import { type Decision, type ListFilters, listFilters } from './schema';

// Reading evidence: an item with its revisions and reviews, the project's list, a stored file, the
// item's audit history.

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

/** A revision's file row (the current revision when none is named). */
export async function fileOf(evidenceId: number, revision?: number): Promise<FileRow> {
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
