import { type Actor, recordEvent } from '../audit';
import { db } from '../db';
import { ServiceError, parseOrThrow } from '../errors';
import { clearCause, openFinding } from '../findings/service';
import type { Signer } from '../identity/reauth';
import type { ActingRole } from '../identity/roles';
import { sign } from '../signatures/service';
import { compareMeasured } from './compare-measured';
import { fileOf } from './read';
import { evidenceRepo as repo } from './repo';
import type { ProjectRef } from './revision';
import { reviewForm } from './schema';

// Reviewing evidence: a certifier's signed decision on the current revision (signatures/service.ts);
// and the findings that evidence opens or clears (a rejection; model versus test beyond tolerance).

/**
 * Accept or reject the current revision: a signed act (signatures/service.ts), one decision per
 * revision; the uploader may not review it. A rejection opens a finding against each linked requirement
 * (assigned to the uploader); accepting a later revision closes the findings the item's rejection opened.
 */
export async function reviewEvidence(input: {
	evidenceId: number;
	project: ProjectRef;
	actor: Actor;
	role: ActingRole;
	fields: Record<string, unknown>;
	signer: Signer;
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
		if (file.uploaded_by !== null && file.uploaded_by === input.signer.id) {
			throw new ServiceError(409, 'You uploaded this revision; another certifier must review it.');
		}
		const linked = await repo.linksOfFiles(trx, [file.id]);
		const signature = await sign(trx, {
			act: v.decision === 'accepted' ? 'evidence.accept' : 'evidence.reject',
			projectId: input.project.id,
			target: { type: 'evidence', id: Number(item.id), revision: file.revision },
			content: {
				evidence: Number(item.id),
				revision: file.revision,
				sha256: file.sha256,
				title: file.title,
				kind: file.kind,
				method: file.method,
				testArticle: file.test_article,
				requirements: linked.map((l) => l.identifier)
			},
			comment: v.comment,
			actor: input.actor,
			role: input.role,
			signer: input.signer
		});
		const review = await repo.insertReview(trx, {
			evidence_file_id: file.id,
			decision: v.decision,
			comment: v.comment,
			meaning: signature.meaning,
			reviewer_id: input.signer.id,
			reviewer_label: input.actor.label,
			reviewer_role: input.role,
			sha256: file.sha256,
			signature_id: Number(signature.id)
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
				sha256: file.sha256,
				signature: Number(signature.id)
			}
		});
		for (const l of linked) {
			if (v.decision === 'rejected')
				await openFinding(trx, input.actor, {
					projectId: input.project.id,
					requirementId: Number(l.id),
					cause: 'evidence',
					evidenceId: Number(item.id),
					evidenceRevision: file.revision,
					assuranceLevel: l.assurance_level ?? 'E',
					assigneeId: file.uploaded_by,
					title: `${l.identifier}: evidence "${file.title}" revision ${file.revision} rejected`,
					description: v.comment
				});
			else
				await clearCause(trx, input.actor, {
					requirementId: Number(l.id),
					cause: 'evidence',
					evidenceId: Number(item.id),
					evidenceRevision: file.revision
				});
		}
		return {
			decision: review.decision,
			revision: file.revision,
			meaning: review.meaning,
			at: new Date(review.reviewed_at).toISOString(),
			signature: Number(signature.id),
			sha256: signature.content_sha256
		};
	});
}

/**
 * Model versus test for a measured-frequency-response revision, after it is stored: agreement beyond
 * the requirement's tolerance opens a finding (assigned to the uploader); a later revision within
 * tolerance closes it.
 */
export async function checkAgreementFindings(
	actor: Actor,
	projectId: number,
	evidenceId: number,
	revision: number
) {
	const comparisons = await compareMeasured(evidenceId, revision);
	if (!comparisons.length) return;
	const file = await fileOf(evidenceId, revision);
	await db().transaction(async (trx) => {
		for (const c of comparisons) {
			if (!c.agreement.length) continue;
			const beyond = c.agreement.filter((a) => !a.withinTolerance);
			if (beyond.length) {
				const level = (await repo.linksOfFiles(trx, [file.id])).find(
					(l) => Number(l.id) === c.requirement.id
				)?.assurance_level;
				await openFinding(trx, actor, {
					projectId,
					requirementId: c.requirement.id,
					cause: 'model-mismatch',
					evidenceId,
					evidenceRevision: revision,
					modelVersionId: c.model?.versionId ?? null,
					assuranceLevel: level ?? 'E',
					assigneeId: file.uploaded_by,
					title: `${c.requirement.identifier}: model ${c.model?.name ?? ''} v${c.model?.version ?? ''} and "${file.title}" disagree beyond tolerance`,
					description: beyond
						.map(
							(a) =>
								`${a.label}: largest relative error ${(a.maxRelativeError * 100).toFixed(1)} % (tolerance ${(a.tolerance.relativeError * 100).toFixed(1)} %), largest phase difference ${a.maxPhaseDifferenceDeg.toFixed(1)}° (tolerance ${a.tolerance.phaseDeg}°)`
						)
						.join('; ')
				});
			} else
				await clearCause(trx, actor, {
					requirementId: c.requirement.id,
					cause: 'model-mismatch',
					evidenceId,
					evidenceRevision: revision
				});
		}
	});
}

/**
 * The stored revision is committed: a failure of the agreement check must not undo it (nor remove its
 * object), so it is logged; the evidence page shows the same comparison on every view.
 */
export async function agreementFindingsAfterCommit(
	actor: Actor,
	projectId: number,
	evidenceId: number,
	revision: number
) {
	try {
		await checkAgreementFindings(actor, projectId, evidenceId, revision);
	} catch (e) {
		console.error(`[evidence] agreement findings of evidence ${evidenceId} r${revision} failed:`, e);
	}
}
