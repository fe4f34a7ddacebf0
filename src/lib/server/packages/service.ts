import { createHash } from 'node:crypto';
import { PassThrough, Readable } from 'node:stream';
import { recordEvent, type Actor } from '../audit';
import { currentManifest, getBaseline, type Manifest } from '../baselines/service';
import { baselines } from '../baselines/repo';
import { db } from '../db';
import { ServiceError } from '../errors';
import { sendPackageJob } from '../jobs/boss';
import { objectStore } from '../storage';
import { projectById } from '../trace/repo';
import { writeArchive } from './archive';
import { gatherContent, type PackageContent } from './content';
import { packages, type PackageRow } from './repo';
import { renderReport } from './report';

// Data packages: a certifier asks for one (a frozen baseline's, or a draft of the present state); the
// request is a data_packages row and a queue job written in one transaction with its audit event; the
// worker builds it (buildPackage: report, then archive, each stored in object storage with its SHA-256),
// writing its progress on the row, and records the finished package's hashes in the audit trail.

/** How often a package is tried before it is recorded as failed (a worker that died mid-build). */
const MAX_ATTEMPTS = 3;

export interface PackageFile {
	name: string;
	sha256: string;
	bytes: number;
	href: string;
}

export interface PackageView {
	id: number;
	baselineId: number | null;
	draft: boolean;
	status: PackageRow['status'];
	progress: number;
	step: string;
	error: string | null;
	manifestHash: string | null;
	requestedBy: string;
	requestedAt: string;
	startedAt: string | null;
	finishedAt: string | null;
	href: string;
	report: (PackageFile & { pages: number | null }) | null;
	archive: PackageFile | null;
}

const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);
const fileName = (key: string) => key.slice(key.lastIndexOf('/') + 1);

export function packageView(projectKey: string, r: PackageRow): PackageView {
	const href = `/api/v1/projects/${projectKey}/packages/${r.id}`;
	const done = r.status === 'done';
	return {
		id: Number(r.id),
		baselineId: r.baseline_id === null ? null : Number(r.baseline_id),
		draft: r.baseline_id === null,
		status: r.status,
		progress: r.progress,
		step: r.step,
		error: r.error,
		manifestHash: r.manifest_hash,
		requestedBy: r.requested_by_label,
		requestedAt: new Date(r.requested_at).toISOString(),
		startedAt: iso(r.started_at),
		finishedAt: iso(r.finished_at),
		href,
		report:
			done && r.report_key && r.report_sha256
				? {
						name: fileName(r.report_key),
						sha256: r.report_sha256,
						bytes: Number(r.report_bytes),
						pages: r.report_pages,
						href: `${href}/report.pdf`
					}
				: null,
		archive:
			done && r.archive_key && r.archive_sha256
				? {
						name: fileName(r.archive_key),
						sha256: r.archive_sha256,
						bytes: Number(r.archive_bytes),
						href: `${href}/archive.zip`
					}
				: null
	};
}

/** Queue a package: of baseline `baselineId`, or (null) a draft of the present state. */
export async function requestPackage(
	actor: Actor,
	project: { id: number; key: string },
	baselineId: number | null
): Promise<PackageView> {
	if (baselineId !== null && !(await baselines.summary(db(), project.id, baselineId)))
		throw new ServiceError(404, `There is no baseline ${baselineId} in this project.`);
	const row = await db().transaction(async (trx) => {
		// One request at a time per baseline (or per project's drafts), so two clicks queue one build.
		await trx.raw('select pg_advisory_xact_lock(hashtext(?))', [
			`data package ${project.id} ${baselineId ?? 'draft'}`
		]);
		const waiting = await packages.inFlight(trx, project.id, baselineId);
		if (waiting) return waiting;
		const r = await packages.insert(trx, {
			project_id: project.id,
			baseline_id: baselineId,
			requested_by: actor.userId ?? null,
			requested_by_label: actor.label
		});
		await sendPackageJob(trx, Number(r.id));
		await recordEvent(trx, actor, {
			projectId: project.id,
			action: 'package.request',
			subjectType: baselineId === null ? 'project' : 'baseline',
			subjectId: baselineId ?? project.id,
			after: { package: Number(r.id), draft: baselineId === null }
		});
		return r;
	});
	return packageView(project.key, row);
}

export async function getPackage(project: { id: number; key: string }, id: number): Promise<PackageView> {
	const r = await packages.byId(db(), project.id, id);
	if (!r) throw new ServiceError(404, `There is no data package ${id} in this project.`);
	return packageView(project.key, r);
}

/** The newest packages of a baseline, or (null) the project's drafts. */
export async function latestPackages(
	project: { id: number; key: string },
	baselineId: number | null
): Promise<PackageView[]> {
	return (await packages.latest(db(), project.id, baselineId)).map((r) => packageView(project.key, r));
}

/** A finished package's report or archive, streamed from object storage. */
export async function openPackageFile(
	project: { id: number; key: string },
	id: number,
	which: 'report' | 'archive'
): Promise<{ body: Readable; name: string; bytes: number; sha256: string; row: PackageRow }> {
	const r = await packages.byId(db(), project.id, id);
	if (!r) throw new ServiceError(404, `There is no data package ${id} in this project.`);
	const key = which === 'report' ? r.report_key : r.archive_key;
	if (r.status !== 'done' || !key)
		throw new ServiceError(409, `Data package ${id} is not finished (${r.status}: ${r.step}).`);
	const o = await objectStore().get(key);
	return {
		body: o.body,
		name: fileName(key),
		bytes: Number(which === 'report' ? r.report_bytes : r.archive_bytes),
		sha256: (which === 'report' ? r.report_sha256 : r.archive_sha256) ?? '',
		row: r
	};
}

const sha256 = (b: Buffer) => createHash('sha256').update(b).digest('hex');

/** The manifest a package is built from: the baseline's as frozen (checked), or the present state's. */
async function sourceOf(row: PackageRow): Promise<{
	manifest: Manifest;
	hash: string;
	baseline: PackageContent['baseline'];
}> {
	if (row.baseline_id === null) {
		const now = await currentManifest(Number(row.project_id));
		return { manifest: now.manifest, hash: now.hash, baseline: null };
	}
	const b = await getBaseline(Number(row.project_id), Number(row.baseline_id));
	if (!b.verified)
		throw new Error(
			`the stored manifest of baseline #${b.number} does not hash to its SHA-256; no package is built from it`
		);
	return {
		manifest: b.manifest,
		hash: b.manifest_hash,
		baseline: {
			id: Number(b.id),
			number: b.number,
			label: b.label,
			note: b.note,
			frozenAt: new Date(b.created_at).toISOString(),
			frozenBy: b.created_by_label
		}
	};
}

/**
 * Build package `id` (the worker calls this for each job): claim it, read the manifest and the rows it
 * names, render the report, store it, stream the archive into the store, record both SHA-256s. A
 * package that is done or failed is left alone; a failure is recorded on the row and in the audit trail.
 */
export async function buildPackage(id: number): Promise<void> {
	if (!Number.isInteger(id)) return;
	const row = await packages.claim(db(), id);
	if (!row) return;
	const projectId = Number(row.project_id);
	const actor: Actor = { userId: row.requested_by, label: row.requested_by_label };
	if (row.attempts > MAX_ATTEMPTS) {
		await packages.fail(db(), id, `gave up after ${MAX_ATTEMPTS} attempts (the builder stopped each time)`);
		return;
	}
	const progress = async (fraction: number, step: string) => {
		await packages.progress(db(), id, 100 * Math.min(0.99, fraction), step);
	};
	try {
		const project = await projectById(db(), projectId);
		if (!project) throw new Error(`project ${projectId} not found`);
		await progress(0.01, 'reading the manifest');
		const src = await sourceOf(row);
		const content = await gatherContent(db(), {
			projectId,
			draft: src.baseline === null,
			baseline: src.baseline,
			manifest: src.manifest,
			manifestHash: src.hash,
			generatedBy: row.requested_by_label
		});
		const stem = src.baseline
			? `${project.key}-baseline-${src.baseline.number}`
			: `${project.key}-draft-${id}`;
		const reportName = `${stem}-report.pdf`;
		const prefix = `packages/${project.key}/${id}/`;
		const store = objectStore();

		const report = await renderReport(content, (f, step) => progress(0.03 + 0.6 * f, `report: ${step}`));

		// The report is stored while the archive streams into the store (both uploads at once); a failed
		// upload of either stops the archive, and the build fails.
		await progress(0.64, 'storing the report; archive');
		const pass = new PassThrough();
		const stop = (e: unknown) => {
			pass.destroy(e as Error);
			throw e;
		};
		const reportPut = store
			.put(prefix + reportName, Readable.from([report.pdf]), 'application/pdf')
			.catch(stop);
		const archiveKey = `${prefix}${stem}-package.zip`;
		const put = store.put(archiveKey, pass, 'application/zip').catch(stop);
		const [archive] = await Promise.all([
			writeArchive(
				{ content, pdf: report.pdf, reportName, evidence: async (key) => (await store.get(key)).body },
				pass,
				(f, step) => progress(0.66 + 0.33 * f, step)
			),
			put,
			reportPut
		]);
		const files = {
			manifest_hash: src.hash,
			report_pages: report.pages,
			report_key: prefix + reportName,
			report_sha256: sha256(report.pdf),
			report_bytes: report.pdf.length,
			archive_key: archiveKey,
			archive_sha256: archive.sha256,
			archive_bytes: archive.bytes
		};
		await db().transaction(async (trx) => {
			await packages.finish(trx, id, files);
			await recordEvent(trx, actor, {
				projectId,
				action: 'package.generate',
				subjectType: src.baseline ? 'baseline' : 'project',
				subjectId: src.baseline?.id ?? projectId,
				after: {
					package: id,
					draft: src.baseline === null,
					manifestHash: src.hash,
					report: { sha256: files.report_sha256, bytes: files.report_bytes, pages: report.pages },
					archive: { sha256: archive.sha256, bytes: archive.bytes, files: archive.files.length }
				}
			});
		});
	} catch (e) {
		const message = (e as Error).message || String(e);
		console.error(`[packages] package ${id} failed:`, e);
		await db().transaction(async (trx) => {
			await packages.fail(trx, id, message);
			await recordEvent(trx, actor, {
				projectId,
				action: 'package.error',
				subjectType: row.baseline_id === null ? 'project' : 'baseline',
				subjectId: row.baseline_id ?? projectId,
				after: { package: id, error: message.slice(0, 500) }
			});
		});
	}
}
