import type { Manifest } from '../baselines/service';
import type { FindingView } from '../findings/service';
import type { SignatureRow } from '../signatures/repo';
import { viewOf, type SignatureView } from '../signatures/service';
import { FINDING_STATES, type FindingState } from '../../verification/index';

// The sign-off records of a data package (issue 15's electronic signatures, requirement review
// approvals, findings and the baseline's signed release), arranged once for the report and the archive.
// What the baseline freezes is taken from its manifest: each requirement's review state and revision in
// force (`review`), the deferred findings it carries (`deferredFindings`) and each evidence revision's
// review decision. The rest is read from the database when the package is built: the signature records
// (append-only: the database refuses to change or delete one, so each reads as it was signed, but
// signatures made after the freeze exist too and are marked) and the findings with their present state.

/** Where a sign-off record comes from, in the words the report and README.txt print. */
export const SIGNOFF_SOURCES = {
	frozen: 'as frozen in the baseline manifest',
	draft: 'from the present state (a draft freezes nothing)',
	readAtPackageTime: 'read from the database when this package was built'
} as const;

/** A signature as the package shows it: the one view of a signature, plus what was signed and when. */
export interface SignedRecord extends Pick<
	SignatureView,
	'id' | 'act' | 'label' | 'meaning' | 'notMeant' | 'comment' | 'sha256' | 'intact'
> {
	signer: { name: string; email: string; role: string };
	/** How the signer was confirmed when signing (re-entered password, ...). */
	method: string;
	signedAt: string;
	target: { type: string; id: number; revision: number };
	/** What was signed, in words: "requirement PIT-001 revision 2". */
	subject: string;
	/** Signed after the baseline was frozen (never for a draft). */
	afterFreeze: boolean;
	content: unknown;
}

export interface RequirementSignoff {
	/** Review state of the baseline's revision and the revision in force (manifest `review`). */
	review: { revision: number; state: string; approvedRevision: number | null } | null;
	/** Approvals and returns of any revision of the requirement. */
	approvals: SignedRecord[];
	/** Signed reviews of the evidence revisions the manifest links to the requirement. */
	evidence: SignedRecord[];
	findings: FindingView[];
	/** Signed decisions on those findings (closed, deferred, not a defect). */
	findingDecisions: SignedRecord[];
}

export type DeferredFinding = NonNullable<Manifest['deferredFindings']>[number];

export interface Signoff {
	/** When the database was read for the records not frozen in the manifest. */
	readAt: Date;
	/** When the baseline was frozen; null for a draft. */
	frozenAt: Date | null;
	byRequirement: Map<string, RequirementSignoff>;
	/** The baseline's release signature(s); with whether the signed manifest SHA-256 is this manifest's. */
	release: (SignedRecord & { signsThisManifest: boolean })[];
	/** Findings against the package's requirements, oldest first (present state). */
	findings: FindingView[];
	counts: Record<FindingState, number>;
	/** Deferred findings the baseline carries (manifest), each with its deferral signature. */
	deferred: (DeferredFinding & { signed: SignedRecord | null })[];
	/** Every signature the package shows, oldest first (the archive keeps each one's signed content). */
	signatures: SignedRecord[];
}

function subjectOf(
	s: SignatureRow,
	names: { requirement: Map<number, string>; finding: Map<number, string> }
) {
	const rev = s.target_revision;
	switch (s.target_type) {
		case 'requirement':
			return `requirement ${names.requirement.get(Number(s.target_id)) ?? `#${s.target_id}`} revision ${rev}`;
		case 'evidence':
			return `evidence #${s.target_id} revision ${rev}`;
		case 'finding':
			return `finding ${names.finding.get(Number(s.target_id)) ?? `#${s.target_id}`} version ${rev}`;
		case 'baseline':
			return `baseline #${rev}`;
		default:
			return `${s.target_type} #${s.target_id} (${rev})`;
	}
}

/**
 * Arrange the stored signatures and findings for a package of `manifest`: only those of its
 * requirements, its evidence revisions, their findings and (for a baseline) its own release.
 */
export function arrangeSignoff(input: {
	manifest: Manifest;
	manifestHash: string;
	baseline: { id: number; frozenAt: string } | null;
	signatures: SignatureRow[];
	findings: FindingView[];
	readAt: Date;
}): Signoff {
	const m = input.manifest;
	const frozenAt = input.baseline ? new Date(input.baseline.frozenAt) : null;
	const reqName = new Map(m.requirements.map((r) => [Number(r.id), r.identifier]));
	const inPackage = new Set(m.requirements.map((r) => r.identifier));
	const findings = input.findings
		.filter((f) => inPackage.has(f.requirement.identifier))
		.sort((a, b) => a.number - b.number);
	const findingName = new Map(findings.map((f) => [f.id, f.label]));
	const evidenceRevs = new Set(m.evidence.map((e) => `${e.evidenceId}:${e.revision}`));

	const record = (s: SignatureRow): SignedRecord => {
		const v = viewOf(s, null);
		return {
			id: v.id,
			act: v.act,
			label: v.label,
			meaning: v.meaning,
			notMeant: v.notMeant,
			comment: v.comment,
			signer: { name: v.signer.name, email: v.signer.email, role: v.signer.role },
			method: s.confirmed_by,
			signedAt: v.at,
			target: { type: s.target_type, id: Number(s.target_id), revision: s.target_revision },
			subject: subjectOf(s, { requirement: reqName, finding: findingName }),
			sha256: v.sha256,
			intact: v.intact,
			// The freeze's own release shares its transaction's time: "after" is strictly later.
			afterFreeze: frozenAt !== null && new Date(s.signed_at).getTime() > frozenAt.getTime(),
			content: s.content
		};
	};

	const kept = input.signatures.filter((s) => {
		const id = Number(s.target_id);
		if (s.target_type === 'requirement') return reqName.has(id);
		if (s.target_type === 'evidence') return evidenceRevs.has(`${id}:${s.target_revision}`);
		if (s.target_type === 'finding') return findingName.has(id);
		if (s.target_type === 'baseline') return input.baseline !== null && id === input.baseline.id;
		return false;
	});
	const signatures = kept.map(record);

	const review = new Map((m.review ?? []).map((r) => [r.requirement, r]));
	const byRequirement = new Map<string, RequirementSignoff>();
	for (const r of m.requirements) {
		const ev = new Set(
			m.evidence
				.filter((e) => e.requirements.includes(r.identifier))
				.map((e) => `${e.evidenceId}:${e.revision}`)
		);
		const rv = review.get(r.identifier);
		const own = findings.filter((f) => f.requirement.identifier === r.identifier);
		const ownIds = new Set(own.map((f) => f.id));
		byRequirement.set(r.identifier, {
			review: rv ? { revision: rv.revision, state: rv.state, approvedRevision: rv.approvedRevision } : null,
			approvals: signatures.filter((s) => s.target.type === 'requirement' && s.target.id === Number(r.id)),
			evidence: signatures.filter(
				(s) => s.target.type === 'evidence' && ev.has(`${s.target.id}:${s.target.revision}`)
			),
			findings: own,
			findingDecisions: signatures.filter((s) => s.target.type === 'finding' && ownIds.has(s.target.id))
		});
	}

	const counts = Object.fromEntries(FINDING_STATES.map((s) => [s, 0])) as Record<FindingState, number>;
	for (const f of findings) counts[f.state]++;
	const byId = new Map(signatures.map((s) => [s.id, s]));
	const release = signatures
		.filter((s) => s.target.type === 'baseline')
		.map((s) => ({
			...s,
			signsThisManifest: (s.content as { manifestSha256?: unknown })?.manifestSha256 === input.manifestHash
		}));
	return {
		readAt: input.readAt,
		frozenAt,
		byRequirement,
		release,
		findings,
		counts,
		deferred: (m.deferredFindings ?? []).map((d) => ({
			...d,
			signed: d.signature == null ? null : (byId.get(Number(d.signature)) ?? null)
		})),
		signatures
	};
}
