import { createHash } from 'node:crypto';
import { computeRun } from '../../src/lib/server/analyses/compute';
import { canonical } from '../../src/lib/server/audit';
import { manifestHash, type Manifest } from '../../src/lib/server/baselines/service';
import type { PackageContent } from '../../src/lib/server/packages/content';
import type { ModelVersionRow, RunRow, SpecRow } from '../../src/lib/server/packages/repo';
import { arrangeSignoff } from '../../src/lib/server/packages/signoff';
import type { FindingView } from '../../src/lib/server/findings/service';
import { MEANINGS, type SignedAct } from '../../src/lib/server/signatures/meanings';
import type { SignatureRow } from '../../src/lib/server/signatures/repo';
import { checkText, provedNumbers, type SnapshotRequirement } from '../../src/lib/server/trace/service';
import { ENGINE_VERSION } from '../../src/lib/stability/index';

// A data package's content without a database: n requirements over two model versions, alternating
// circle and Popov checks, every run computed by the engine (computeRun, as the worker does), some
// requirements with accepted evidence whose bytes are given. For the report unit test and the bench.
// The models: 1/(s+1)^3 (min Re G = -1/4 at 1 rad/s, so the circle criterion with k1 = 0 proves k2 < 4;
// Khalil, Nonlinear Systems, 3rd ed., Theorem 7.1) and a lightly damped fourth-order loop.

const sha = (s: string | Buffer) => createHash('sha256').update(s).digest('hex');

const MODELS = [
	{
		id: 1,
		model: 'pitch actuator loop',
		version: 1,
		content: {
			operatingPoints: [{ label: 'nominal', model: { kind: 'tf' as const, num: [1], den: [1, 3, 3, 1] } }]
		}
	},
	{
		id: 2,
		model: 'yaw drive loop',
		version: 3,
		content: {
			operatingPoints: [
				{ label: 'hover, 20 C', model: { kind: 'tf' as const, num: [4], den: [1, 1.3, 5.12, 4.9, 4] } },
				{
					label: 'cruise',
					model: {
						kind: 'zpk' as const,
						zeros: [],
						poles: [
							[-1, 2],
							[-1, -2]
						] as [number, number][],
						gain: 5
					}
				}
			]
		}
	}
];

export function packageContentFixture(
	n: number,
	opts: { draft?: boolean; evidenceBytes?: number } = {}
): { content: PackageContent; evidence: Map<number, Buffer> } {
	const modelVersions: ModelVersionRow[] = MODELS.map((m) => ({
		id: m.id,
		model: m.model,
		version: m.version,
		note: 'fixture',
		content: m.content,
		content_hash: sha(canonical(m.content)),
		created_at: new Date('2026-11-30T10:00:00Z')
	}));
	const runs = new Map<number, RunRow>();
	const specs = new Map<number, SpecRow>();
	const evidenceBytes = new Map<number, Buffer>();
	const requirements: SnapshotRequirement[] = [];
	const evidence: Manifest['evidence'] = [];
	// Two runs per distinct input: the same model and check compute once.
	const cache = new Map<string, ReturnType<typeof computeRun>>();
	for (let i = 1; i <= n; i++) {
		const identifier = `FIX-${String(i).padStart(3, '0')}`;
		const mv = MODELS[i % 2];
		const popov = i % 3 === 0;
		const check = popov
			? { type: 'popov', sector: [0, i % 2 ? 1.5 : 3] }
			: { type: 'circle', sector: [0, i % 4 === 1 ? 3 : 6] };
		const margin = i % 5 === 0 ? 0.2 : null;
		const key = canonical({ mv: mv.id, check, margin });
		const out =
			cache.get(key) ??
			computeRun({ check, requiredMargin: margin, operatingPoints: null, content: mv.content });
		cache.set(key, out);
		const runId = 1000 + i;
		const specId = 500 + i;
		runs.set(runId, {
			id: runId,
			verdict: out.verdict,
			result: JSON.parse(JSON.stringify(out.result)),
			worst_point: out.worstPoint,
			curves: JSON.parse(JSON.stringify(out.curves)),
			output_hash: out.outputHash,
			status: 'done',
			error: null
		});
		specs.set(specId, { id: specId, check, required_margin: margin, operating_points: null });
		const statement = `The ${mv.model} shall stay absolutely stable for every actuator gain in the sector ${checkText(check)} (${identifier}).`;
		const verified = out.verdict === 'pass';
		requirements.push({
			id: i,
			identifier,
			revision: 1 + (i % 3),
			title: `Absolute stability of the ${mv.model}, case ${i}`,
			level: ['system', 'subsystem', 'loop'][i % 3],
			assuranceLevel: ['A', 'B', 'C'][i % 3],
			status: 'approved',
			methods: i % 4 === 0 ? ['analysis', 'test'] : ['analysis'],
			owner: { id: 1, name: 'Ada Fixture' },
			parents: [],
			children: [],
			model: {
				id: mv.id,
				name: mv.model,
				versionId: mv.id,
				version: mv.version,
				hash: sha(canonical(mv.content))
			},
			analysisState: verified ? 'verified' : 'not-proved',
			latestRun: {
				id: runId,
				status: 'done',
				verdict: out.verdict,
				stale: false,
				numbers: provedNumbers(check, JSON.parse(JSON.stringify(out.result)), margin),
				worstPoint: out.worstPoint,
				finishedAt: '2026-12-01T09:00:00.000Z',
				modelVersionId: mv.id,
				modelVersion: mv.version,
				modelHash: sha(canonical(mv.content)),
				engineVersion: ENGINE_VERSION,
				specVersion: 1,
				check: checkText(check),
				outputHash: out.outputHash,
				requirementRevision: 1 + (i % 3)
			},
			pendingRuns: 0,
			evidence: { count: 0, accepted: 0, rejected: 0, unreviewed: 0 },
			state: verified ? 'verified' : 'not-proved',
			stateLabel: verified ? 'Verified by analysis' : 'Not proved',
			stateSymbol: verified ? '✓' : '✕',
			how: verified ? 'directly' : null,
			blockers: verified
				? []
				: [{ kind: 'not-proved', text: 'The analysis did not prove the requirement.', ref: null }],
			lastChange: '2026-12-01T08:00:00.000Z',
			statement,
			rationale: i % 2 ? 'Saturation of the actuator lies in the sector [0, 1] (common practice).' : '',
			contentHash: sha(statement),
			spec: {
				id: specId,
				version: 1,
				hash: sha(canonical(check)),
				check: checkText(check),
				requiredMargin: margin
			}
		} as SnapshotRequirement);
		if (i % 4 === 0) {
			const fileId = 9000 + i;
			const bytes = Buffer.alloc(opts.evidenceBytes ?? 2048, `rig test log of ${identifier}\n`);
			evidenceBytes.set(fileId, bytes);
			evidence.push({
				evidenceId: 700 + i,
				revision: 1,
				fileId,
				title: `Rig test of ${identifier}`,
				kind: 'log',
				method: 'test',
				file: `rig-${identifier}.log`,
				sizeBytes: bytes.length,
				sha256: sha(bytes),
				uploadedBy: 'Ada Fixture',
				uploadedAt: '2026-12-01T07:00:00.000Z',
				review: {
					decision: 'accepted',
					comment: 'matches the rig record',
					reviewer: 'Cy Certifier',
					reviewedAt: '2026-12-01T07:30:00.000Z'
				},
				requirements: [identifier]
			});
		}
	}
	// Sign-off: every requirement's revision approved by a signature, every evidence revision's review
	// signed, an analysis finding per not-proved requirement (every third deferred, the rest closed).
	const signatures: SignatureRow[] = [];
	const sign = (act: SignedAct, type: string, id: number, revision: number, content: unknown) => {
		const c = JSON.parse(canonical(content));
		signatures.push({
			id: signatures.length + 1,
			project_id: 1,
			act,
			target_type: type,
			target_id: id,
			target_revision: revision,
			content: c,
			content_sha256: sha(canonical(c)),
			meaning: MEANINGS[act],
			comment: act === 'requirement.approve' ? '' : 'fixture decision',
			signer_id: 2,
			signer_name: 'Cy Certifier',
			signer_email: 'cy@fixture.test',
			signer_role: 'certifier',
			confirmed_by: 'password',
			signed_at: new Date('2026-12-01T08:30:00Z')
		});
		return signatures.length;
	};
	const findings: FindingView[] = [];
	const deferredFindings: NonNullable<Manifest['deferredFindings']> = [];
	for (const r of requirements) {
		sign('requirement.approve', 'requirement', r.id, r.revision, {
			requirement: r.identifier,
			revision: r.revision,
			revisionHash: r.contentHash
		});
		if (r.state === 'verified') continue;
		const n = findings.length + 1;
		const deferred = n % 3 === 1;
		const sig = sign(deferred ? 'finding.defer' : 'finding.close', 'finding', 5000 + n, 1, {
			finding: `F-${n}`,
			version: 1,
			to: deferred ? 'deferred' : 'closed'
		});
		findings.push({
			id: 5000 + n,
			number: n,
			label: `F-${n}`,
			title: `${r.identifier}: analysis not proved`,
			description: '',
			state: deferred ? 'deferred' : 'closed',
			stateLabel: deferred ? 'Deferred' : 'Closed',
			symbol: deferred ? '»' : '✓',
			tone: 'none',
			open: false,
			cause: 'analysis',
			causeLabel: 'Analysis run',
			requirement: { id: r.id, identifier: r.identifier, title: r.title },
			assuranceLevel: r.assuranceLevel,
			run: r.latestRun?.id ?? null,
			evidence: null,
			modelVersion: null,
			assignee: null,
			openedBy: 'worker',
			openedAt: '2026-12-01T09:00:00.000Z',
			updatedAt: '2026-12-01T09:30:00.000Z',
			version: 2,
			clearedBy: null,
			justification: deferred ? 'The next model release addresses it.' : 'Sector narrowed by design.',
			targetDate: deferred ? '2027-06-30' : null,
			signatureId: sig
		});
		if (deferred)
			deferredFindings.push({
				id: 5000 + n,
				label: `F-${n}`,
				title: `${r.identifier}: analysis not proved`,
				requirement: r.identifier,
				assuranceLevel: r.assuranceLevel,
				cause: 'analysis',
				justification: 'The next model release addresses it.',
				targetDate: '2027-06-30',
				signature: sig
			});
	}
	for (const e of evidence)
		sign('evidence.accept', 'evidence', e.evidenceId, e.revision, {
			evidence: e.evidenceId,
			sha256: e.sha256
		});

	const manifest = JSON.parse(
		canonical({
			format: 'loopwarden-snapshot/2',
			project: { key: 'FIX', name: 'Fixture project' },
			engineVersion: ENGINE_VERSION,
			requirements,
			links: [],
			modelVersions: MODELS.map((m) => ({
				id: m.id,
				model: m.model,
				version: m.version,
				contentHash: sha(canonical(m.content))
			})),
			evidence,
			deferredFindings,
			review: requirements.map((r) => ({
				requirement: r.identifier,
				revision: r.revision,
				state: 'approved',
				approvedRevision: r.revision
			}))
		})
	) as Manifest;
	const draft = opts.draft ?? false;
	const hash = manifestHash(manifest);
	const baseline = draft
		? null
		: {
				id: 1,
				number: 2,
				label: 'Design review 2',
				note: 'fixture baseline',
				frozenAt: '2026-12-01T10:00:00.000Z',
				frozenBy: 'Cy Certifier'
			};
	if (baseline)
		sign('baseline.release', 'baseline', baseline.id, baseline.number, {
			project: 'FIX',
			baseline: baseline.number,
			label: baseline.label,
			manifestSha256: hash
		});
	return {
		content: {
			draft,
			project: manifest.project,
			baseline,
			manifest,
			manifestHash: hash,
			engineVersion: manifest.engineVersion,
			generatorEngineVersion: ENGINE_VERSION,
			appVersion: 'fixture',
			generatedAt: new Date('2026-12-02T06:00:00Z'),
			generatedBy: 'Cy Certifier',
			previous: null,
			runs,
			specs,
			modelVersions,
			evidenceFiles: new Map(
				[...evidenceBytes].map(([id, b]) => [
					id,
					{ storage_key: `fixture/${id}`, sha256: sha(b), size_bytes: b.length }
				])
			),
			signoff: arrangeSignoff({
				manifest,
				manifestHash: hash,
				baseline,
				signatures,
				findings,
				readAt: new Date('2026-12-02T06:00:00Z')
			})
		},
		evidence: evidenceBytes
	};
}
