import { createHash } from 'node:crypto';
import { canonical, recordEvent, type Actor } from '../audit';
import type { Db } from '../db';
import { ServiceError } from '../errors';
import { isConfirmed, type Signer } from '../identity/reauth';
import type { ActingRole } from '../identity/roles';
import { ACT_LABELS, MEANINGS, NOT_MEANT, type SignedAct } from './meanings';
import { signatures, type SignatureRow } from './repo';

// The one mechanism of every signed act (approving or returning a requirement revision, accepting or
// rejecting an evidence revision, closing, deferring or declaring a finding not a defect, releasing a
// baseline). A signature binds the signer, the time, the meaning of the act and the SHA-256 of exactly
// what was signed (kept beside it, so anyone can hash it again), to one revision of its target: when the
// target changes, the signature stays with the revision it was made on (US 21 CFR Part 11 §11.70,
// signature/record linking, as common practice). Every signature goes into the audit chain in the
// transaction of the act itself.

export const sha256Of = (content: unknown) =>
	createHash('sha256').update(canonical(content), 'utf8').digest('hex');

export interface SignRequest {
	act: SignedAct;
	projectId: number;
	target: { type: 'requirement' | 'evidence' | 'finding' | 'baseline'; id: number; revision: number };
	/** Exactly what is signed; its canonical JSON is hashed and kept. */
	content: unknown;
	comment?: string;
	actor: Actor;
	role: ActingRole;
	signer: Signer;
}

/** Sign, in the caller's transaction (the act and its signature commit or roll back together). */
export async function sign(trx: Db, r: SignRequest): Promise<SignatureRow> {
	if (!isConfirmed(r.signer.confirmation, r.signer.id) || r.actor.userId !== r.signer.id)
		throw new ServiceError(401, 'Confirm who you are to sign: enter your password again.', {
			password: 'Enter your password to sign.'
		});
	// A provider re-authentication confirms one pending signature only: this act on this revision.
	const bound = r.signer.confirmation.binding;
	if (
		bound &&
		(bound.act !== r.act ||
			bound.targetType !== r.target.type ||
			bound.targetId !== r.target.id ||
			bound.revision !== r.target.revision)
	)
		throw new ServiceError(
			409,
			`Your sign-in at the identity provider confirmed another signature (${bound.act} of ${bound.targetType} ${bound.targetId} revision ${bound.revision}), not this one (${r.act} of revision ${r.target.revision}): nothing was signed.`
		);
	const content = JSON.parse(canonical(r.content));
	const row = await signatures.insert(trx, {
		project_id: r.projectId,
		act: r.act,
		target_type: r.target.type,
		target_id: r.target.id,
		target_revision: r.target.revision,
		content,
		content_sha256: sha256Of(content),
		meaning: MEANINGS[r.act],
		comment: (r.comment ?? '').trim(),
		signer_id: r.signer.id,
		signer_name: r.signer.name,
		signer_email: r.signer.email,
		signer_role: r.role,
		confirmed_by: r.signer.confirmation.method
	});
	await recordEvent(trx, r.actor, {
		projectId: r.projectId,
		action: `signature.${r.act}`,
		subjectType: r.target.type,
		subjectId: r.target.id,
		after: {
			signature: Number(row.id),
			act: r.act,
			revision: r.target.revision,
			meaning: row.meaning,
			comment: row.comment,
			sha256: row.content_sha256,
			signer: r.signer.email,
			role: r.role,
			confirmedBy: row.confirmed_by
		}
	});
	return row;
}

export interface SignatureView {
	id: number;
	act: SignedAct;
	label: string;
	meaning: string;
	notMeant: string;
	comment: string;
	signer: { id: number; name: string; email: string; role: string };
	at: string;
	sha256: string;
	/** The revision (version, number) it was made on. */
	revision: number;
	/** False when the target has changed since: the signature applies to the earlier revision only. */
	current: boolean;
	/** The kept content still hashes to the recorded SHA-256. */
	intact: boolean;
	/** How the signer was confirmed: 'password' or 'identity provider re-authentication'. */
	confirmedBy: string;
	appliesTo: string;
}

export function viewOf(s: SignatureRow, currentRevision: number | null, word = 'revision'): SignatureView {
	const act = s.act as SignedAct;
	const current = currentRevision === null || s.target_revision === currentRevision;
	return {
		id: Number(s.id),
		act,
		label: ACT_LABELS[act] ?? act,
		meaning: s.meaning,
		notMeant: NOT_MEANT[act] ?? '',
		comment: s.comment,
		signer: { id: Number(s.signer_id), name: s.signer_name, email: s.signer_email, role: s.signer_role },
		at: new Date(s.signed_at).toISOString(),
		sha256: s.content_sha256,
		revision: s.target_revision,
		current,
		intact: sha256Of(s.content) === s.content_sha256,
		confirmedBy: s.confirmed_by,
		appliesTo:
			currentRevision === null
				? `made on ${word} ${s.target_revision}`
				: current
					? `applies to ${word} ${s.target_revision}, the current one`
					: `applies to the earlier ${word} ${s.target_revision}, not to the current ${word} ${currentRevision}`
	};
}

/** Every signature of a target, each marked with the revision it applies to. */
export async function signaturesOf(
	db: Db,
	targetType: SignRequest['target']['type'],
	targetId: number,
	currentRevision: number | null,
	word?: string
): Promise<SignatureView[]> {
	return (await signatures.of(db, targetType, targetId)).map((s) => viewOf(s, currentRevision, word));
}

/** Every signature of a project, as stored (append-only), oldest first. */
export const signaturesOfProject = (db: Db, projectId: number) => signatures.ofProject(db, projectId);

export const signaturesByIds = (db: Db, ids: number[]) => signatures.byIds(db, ids);
