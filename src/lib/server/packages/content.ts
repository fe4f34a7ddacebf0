import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ENGINE_VERSION } from '../../stability/index';
import type { Db } from '../db';
import { compareSnapshots, type Comparison } from '../baselines/compare';
import type { Manifest } from '../baselines/service';
import { listFindings } from '../findings/service';
import { signaturesOfProject } from '../signatures/service';
import { arrangeSignoff, type Signoff } from './signoff';
import { stored, type ModelVersionRow, type RunRow, type SpecRow } from './repo';

// What a data package is made of, gathered once: the manifest (a frozen baseline's, or the present
// state's for a draft), its SHA-256, the previous baseline's comparison, and the stored rows the
// manifest names by id (run results and curves, specifications, model version contents, evidence
// storage keys). Runs, model versions and evidence files are immutable once stored, so reading them
// by id after the freeze gives what the baseline froze. The sign-off records (signatures, findings) are
// read as they stand when the package is built, except what the manifest freezes (signoff.ts).

/**
 * The application's version (package.json), printed in the report's environment appendix. The built
 * server and the worker both run from the checkout (or the deployed folder) that holds package.json.
 */
export const APP_VERSION: string = (() => {
	try {
		const pkg = JSON.parse(readFileSync(join(process.cwd(), 'package.json'), 'utf8')) as {
			name?: string;
			version?: string;
		};
		return pkg.name === 'loopwarden' && pkg.version ? pkg.version : 'unknown';
	} catch {
		return 'unknown';
	}
})();

export interface PackageContent {
	draft: boolean;
	project: { key: string; name: string };
	baseline: {
		id: number;
		number: number;
		label: string;
		note: string;
		frozenAt: string;
		frozenBy: string;
	} | null;
	manifest: Manifest;
	manifestHash: string;
	/** The engine of the manifest (what decided the verdicts) and the one generating the package. */
	engineVersion: string;
	generatorEngineVersion: string;
	appVersion: string;
	generatedAt: Date;
	generatedBy: string;
	previous: { number: number; label: string; hash: string; comparison: Comparison } | null;
	runs: Map<number, RunRow>;
	specs: Map<number, SpecRow>;
	modelVersions: ModelVersionRow[];
	evidenceFiles: Map<number, { storage_key: string; sha256: string; size_bytes: number | string }>;
	signoff: Signoff;
}

export async function gatherContent(
	conn: Db,
	base: Pick<PackageContent, 'draft' | 'baseline' | 'manifest' | 'manifestHash' | 'generatedBy'> & {
		projectId: number;
	}
): Promise<PackageContent> {
	const m = base.manifest;
	const runIds = m.requirements.flatMap((r) => (r.latestRun ? [r.latestRun.id] : []));
	const specIds = m.requirements.flatMap((r) => (r.spec ? [r.spec.id] : []));
	const accepted = m.evidence.filter((e) => e.review?.decision === 'accepted').map((e) => e.fileId);
	const readAt = new Date();
	const [runs, specs, mvs, files, prev, signatures, findings] = await Promise.all([
		stored.runs(conn, runIds),
		stored.specs(conn, specIds),
		stored.modelVersions(
			conn,
			m.modelVersions.map((v) => v.id)
		),
		stored.evidenceFiles(conn, accepted),
		stored.previousBaseline(conn, base.projectId, base.baseline ? base.baseline.number : null),
		signaturesOfProject(conn, base.projectId),
		listFindings(base.projectId, {})
	]);
	return {
		draft: base.draft,
		project: m.project,
		baseline: base.baseline,
		manifest: m,
		manifestHash: base.manifestHash,
		engineVersion: m.engineVersion,
		generatorEngineVersion: ENGINE_VERSION,
		appVersion: APP_VERSION,
		generatedAt: new Date(),
		generatedBy: base.generatedBy,
		previous: prev
			? {
					number: prev.number,
					label: prev.label,
					hash: prev.manifest_hash,
					comparison: compareSnapshots(prev.manifest as Manifest, m)
				}
			: null,
		runs: new Map(runs.map((r) => [Number(r.id), r])),
		specs: new Map(specs.map((s) => [Number(s.id), s])),
		modelVersions: mvs,
		evidenceFiles: new Map(files.map((f) => [Number(f.id), f])),
		signoff: arrangeSignoff({
			manifest: m,
			manifestHash: base.manifestHash,
			baseline: base.baseline,
			signatures,
			findings,
			readAt
		})
	};
}
