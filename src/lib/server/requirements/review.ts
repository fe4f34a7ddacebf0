import { z } from 'zod';
import { blocksApproval } from '../../verification/index';
import { recordEvent, type Actor } from '../audit';
import { config } from '../config';
import { db, type Db } from '../db';
import { parseOrThrow, ServiceError } from '../errors';
import type { Signer } from '../identity/reauth';
import type { ActingRole } from '../identity/roles';
import { mailUsers } from '../mail';
import { sign, signaturesOf, type SignatureView } from '../signatures/service';
import { verificationOf } from '../verification/service';
import { projectsForRequirements as projects } from './repo';
import { review as repo, type CommentRow } from './review-repo';

// The review of a requirement revision: draft -> in review (the author names reviewers) -> approved
// (signed approvals) or returned (a signed return with comments) -> a new revision starts as a draft.
// The approved revision stays in force (requirements.approved_revision) until a later one is approved.
// Independence of review (RTCA DO-178C, SAE ARP4754B, as common practice): the author never approves
// their own revision, and for assurance levels A and B (every level, when the project says so) the
// approval needs approvers who are neither the requirement's owner nor the analyst owning its model.

const revision = z.coerce.number({ error: 'Which revision?' }).int().positive('Which revision?');
const requestSchema = z
	.object({
		revision,
		reviewers: z
			.array(z.coerce.number({ error: 'Choose reviewers.' }).int().positive(), { error: 'Choose reviewers.' })
			.min(1, 'Name at least one reviewer.')
			.max(10, 'At most 10 reviewers.')
	})
	.strict();
const commentSchema = z
	.object({
		revision,
		body: z
			.string({ error: 'Write the comment.' })
			.trim()
			.min(1, 'Write the comment.')
			.max(4000, 'At most 4000 characters.'),
		parentId: z.coerce.number().int().positive().optional()
	})
	.strict();
const decideSchema = z
	.object({
		revision,
		decision: z.enum(['approve', 'return'], { error: 'Choose approve or return.' }),
		comment: z.string().trim().max(4000, 'At most 4000 characters.').default('')
	})
	.strict();

/** A decision form's fields, checked before the signer is sent to the identity provider with them. */
export const parseDecision = (raw: unknown) => parseOrThrow(decideSchema, raw);

export const INDEPENDENCE_RULES = {
	'a-b': 'Assurance levels A and B',
	all: 'Every assurance level'
} as const;
const independenceSchema = z
	.object({
		rule: z.enum(['a-b', 'all'], { error: 'Choose levels A and B, or every level.' }),
		approvals: z.coerce
			.number({ error: 'How many independent approvers?' })
			.int('A whole number from 1 to 3.')
			.min(1, 'At least 1.')
			.max(3, 'At most 3.')
	})
	.strict();

type Locked = NonNullable<Awaited<ReturnType<typeof repo.lock>>>;

/** How many independent approvals a revision needs (0: any one approval by someone else than the author). */
export function independentNeeded(
	level: string,
	rule: { review_independence: 'a-b' | 'all'; independent_approvals: number }
): number {
	const applies = rule.review_independence === 'all' || level === 'A' || level === 'B';
	return applies ? rule.independent_approvals : 0;
}

async function locked(trx: Db, id: number, rev: number): Promise<Locked> {
	const r = await repo.lock(trx, id);
	if (!r) throw new ServiceError(404, `There is no requirement ${id}.`);
	if (rev !== r.current_revision)
		throw new ServiceError(
			409,
			`${r.identifier} is at revision ${r.current_revision} now, not ${rev}; nothing was changed.`,
			{ revision: `The current revision is ${r.current_revision}.` }
		);
	return r;
}

const url = (r: { project_key: string; id: number }) =>
	`${config.publicOrigin}/p/${r.project_key}/requirements/${r.id}`;

/** The author asks for a review of the current revision and names its reviewers. */
export async function requestReview(actor: Actor, requirementId: number, raw: unknown) {
	const v = parseOrThrow(requestSchema, raw);
	return db().transaction(async (trx) => {
		const r = await locked(trx, requirementId, v.revision);
		if (r.review_state !== 'draft' && r.review_state !== 'returned')
			throw new ServiceError(
				409,
				`${r.identifier} revision ${r.current_revision} is ${r.review_state}; only a draft goes to review.`
			);
		const reviewers = [...new Set(v.reviewers)];
		for (const uid of reviewers) {
			if (r.author_id != null && uid === Number(r.author_id))
				throw new ServiceError(422, 'The author of the revision cannot review it.', {
					reviewers: 'Name someone other than the author.'
				});
			if (!(await projects.isMember(trx, Number(r.project_id), uid)))
				throw new ServiceError(422, 'Every reviewer must be a member of the project.', {
					reviewers: `User ${uid} is not a member of this project.`
				});
		}
		await repo.addReviewers(
			trx,
			reviewers.map((uid) => ({
				requirement_id: r.id,
				revision: r.current_revision,
				user_id: uid,
				named_by: actor.userId ?? null
			}))
		);
		await repo.setState(trx, r.id, 'in-review');
		await recordEvent(trx, actor, {
			projectId: Number(r.project_id),
			action: 'requirement.review-requested',
			subjectType: 'requirement',
			subjectId: r.id,
			before: { state: r.review_state, revision: r.current_revision },
			after: { state: 'in-review', revision: r.current_revision, reviewers }
		});
		await mailUsers(
			trx,
			reviewers,
			`[${r.project_key}] Please review ${r.identifier} revision ${r.current_revision}`,
			`${actor.label} asks you to review ${r.identifier} "${r.title}", revision ${r.current_revision}.\n${url(r)}`
		);
		return { state: 'in-review', revision: r.current_revision, reviewers };
	});
}

/** A comment on a revision, or a reply to one (threaded). */
export async function addComment(actor: Actor, requirementId: number, raw: unknown) {
	const v = parseOrThrow(commentSchema, raw);
	return db().transaction(async (trx) => {
		const r = await repo.lock(trx, requirementId);
		if (!r) throw new ServiceError(404, `There is no requirement ${requirementId}.`);
		if (v.revision > r.current_revision)
			throw new ServiceError(422, `There is no revision ${v.revision}.`, { revision: 'No such revision.' });
		let parent: CommentRow | undefined;
		if (v.parentId) {
			parent = await repo.comment(trx, v.parentId);
			if (!parent || Number(parent.requirement_id) !== r.id || parent.revision !== v.revision)
				throw new ServiceError(422, 'The comment answered is not one of this revision.', {
					parentId: 'No such comment on this revision.'
				});
		}
		const c = await repo.addComment(trx, {
			requirement_id: r.id,
			revision: v.revision,
			parent_id: parent ? Number(parent.id) : null,
			author_id: actor.userId ?? null,
			author_label: actor.label,
			body: v.body
		});
		await recordEvent(trx, actor, {
			projectId: Number(r.project_id),
			action: 'requirement.review-comment',
			subjectType: 'requirement',
			subjectId: r.id,
			after: { comment: Number(c.id), revision: v.revision, parent: c.parent_id, body: v.body }
		});
		return { id: Number(c.id) };
	});
}

/** Exactly what an approval or a return signs: the revision's content and the specification in force. */
async function signedContent(trx: Db, r: Locked) {
	const spec = r.current_spec_id ? await repo.spec(trx, Number(r.current_spec_id)) : undefined;
	return {
		requirement: r.identifier,
		revision: r.current_revision,
		title: r.title,
		statement: r.statement,
		rationale: r.rationale,
		level: r.level,
		assuranceLevel: r.assurance_level,
		methods: r.methods,
		ownerId: r.owner_id == null ? null : Number(r.owner_id),
		revisionHash: r.content_hash,
		specification: spec ? { version: spec.version, contentHash: spec.content_hash } : null
	};
}

/**
 * A named reviewer approves or returns the current revision, signing it. Refused: the author (no
 * self-approval), anyone not named, a revision not in review, and an approval while the one verification
 * state has blockers of its text (placeholders, statement/specification disagreement).
 */
export async function decideReview(
	actor: Actor,
	role: ActingRole,
	requirementId: number,
	raw: unknown,
	signer: Signer
) {
	const v = parseOrThrow(decideSchema, raw);
	return db().transaction(async (trx) => {
		const r = await locked(trx, requirementId, v.revision);
		if (r.review_state !== 'in-review')
			throw new ServiceError(
				409,
				`${r.identifier} revision ${r.current_revision} is not in review (it is ${r.review_state}).`
			);
		if (r.author_id != null && Number(r.author_id) === signer.id)
			throw new ServiceError(403, 'You wrote this revision: its author cannot approve or return it.');
		const named = (await repo.reviewers(trx, r.id)).filter((x) => x.revision === r.current_revision);
		if (!named.some((x) => Number(x.id) === signer.id))
			throw new ServiceError(403, 'You are not a named reviewer of this revision.');
		if (v.decision === 'return' && !v.comment)
			throw new ServiceError(422, 'Say what must change: a return needs a comment.', {
				comment: 'Say what must change.'
			});
		if (v.decision === 'approve') {
			const state = (await verificationOf(trx, { requirementIds: [r.id] })).get(r.id);
			const blockers = (state?.blockers ?? []).filter(blocksApproval);
			if (blockers.length)
				throw new ServiceError(
					422,
					`Approval refused: ${blockers.map((b) => b.text).join(' ')}`,
					{},
					{ blockers: blockers.map((b) => ({ kind: b.kind, text: b.text })) }
				);
		}
		const earlier = (await signaturesOf(trx, 'requirement', r.id, r.current_revision)).filter(
			(s) => s.current && s.act === 'requirement.approve'
		);
		if (earlier.some((s) => s.signer.id === signer.id))
			throw new ServiceError(409, 'You have signed this revision already.');
		const signature = await sign(trx, {
			act: v.decision === 'approve' ? 'requirement.approve' : 'requirement.return',
			projectId: Number(r.project_id),
			target: { type: 'requirement', id: r.id, revision: r.current_revision },
			content: await signedContent(trx, r),
			comment: v.comment,
			actor,
			role,
			signer
		});
		if (v.comment)
			await repo.addComment(trx, {
				requirement_id: r.id,
				revision: r.current_revision,
				parent_id: null,
				author_id: signer.id,
				author_label: actor.label,
				body: v.comment
			});
		let state = 'in-review';
		let missing = 0;
		if (v.decision === 'return') state = 'returned';
		else {
			const analyst = await repo.analystOf(trx, r.current_spec_id);
			const independent = (id: number) => id !== Number(r.owner_id ?? 0) && id !== (analyst ?? 0);
			const approvers = [...new Set([...earlier.map((s) => s.signer.id), signer.id])];
			const need = independentNeeded(r.assurance_level, r);
			missing = Math.max(0, need - approvers.filter(independent).length);
			if (missing === 0) state = 'approved';
		}
		if (state !== 'in-review') {
			await repo.setState(trx, r.id, state, state === 'approved' ? r.current_revision : undefined);
			await recordEvent(trx, actor, {
				projectId: Number(r.project_id),
				action: `requirement.review.${state}`,
				subjectType: 'requirement',
				subjectId: r.id,
				before: { state: 'in-review', revision: r.current_revision, approvedRevision: r.approved_revision },
				after: {
					state,
					revision: r.current_revision,
					approvedRevision: state === 'approved' ? r.current_revision : r.approved_revision,
					signature: Number(signature.id)
				}
			});
			await mailUsers(
				trx,
				[r.author_id, r.owner_id],
				`[${r.project_key}] ${r.identifier} revision ${r.current_revision} ${state === 'approved' ? 'approved' : 'returned for rework'}`,
				`${signer.name} signed: "${signature.meaning}"${v.comment ? `\nComment: ${v.comment}` : ''}\n${url(r)}`
			);
		}
		return {
			state,
			revision: r.current_revision,
			signature: Number(signature.id),
			sha256: signature.content_sha256,
			independentApprovalsMissing: missing
		};
	});
}

export interface ReviewComment {
	id: number;
	revision: number;
	author: string;
	body: string;
	at: string;
	replies: ReviewComment[];
}

/** The review of a requirement: its state, reviewers, threaded comments and signatures per revision. */
export async function reviewOf(requirementId: number) {
	const r = await db()('requirements as r')
		.join('projects as p', 'p.id', 'r.project_id')
		.join('requirement_revisions as v', function () {
			this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
		})
		.where('r.id', requirementId)
		.first(
			'r.current_revision',
			'r.review_state',
			'r.approved_revision',
			'v.author_id',
			'v.assurance_level',
			'p.review_independence',
			'p.independent_approvals'
		);
	if (!r) throw new ServiceError(404, `There is no requirement ${requirementId}.`);
	const [reviewers, comments, signatures] = await Promise.all([
		repo.reviewers(db(), requirementId),
		repo.comments(db(), requirementId),
		signaturesOf(db(), 'requirement', requirementId, r.current_revision)
	]);
	const byId = new Map<number, ReviewComment>();
	const roots: ReviewComment[] = [];
	for (const c of comments) {
		const node: ReviewComment = {
			id: Number(c.id),
			revision: c.revision,
			author: c.author_label,
			body: c.body,
			at: new Date(c.created_at).toISOString(),
			replies: []
		};
		byId.set(node.id, node);
		const parent = c.parent_id ? byId.get(Number(c.parent_id)) : undefined;
		(parent ? parent.replies : roots).push(node);
	}
	const revisions = [
		...new Set([
			...comments.map((c) => c.revision),
			...reviewers.map((x) => x.revision),
			...signatures.map((s) => s.revision)
		])
	].sort((a, b) => b - a);
	return {
		state: r.review_state as string,
		currentRevision: r.current_revision as number,
		approvedRevision: (r.approved_revision as number | null) ?? null,
		authorId: r.author_id == null ? null : Number(r.author_id),
		independentNeeded: independentNeeded(r.assurance_level, r),
		perRevision: revisions.map((rev) => ({
			revision: rev,
			reviewers: reviewers
				.filter((x) => x.revision === rev)
				.map((x) => ({ id: Number(x.id), name: x.name, email: x.email })),
			comments: roots.filter((c) => c.revision === rev),
			signatures: signatures.filter((s) => s.revision === rev)
		})),
		signatures: signatures as SignatureView[]
	};
}
export type ReviewView = Awaited<ReturnType<typeof reviewOf>>;

/** The project's independence rule (project administration). */
export async function setIndependence(actor: Actor, projectId: number, raw: unknown) {
	const v = parseOrThrow(independenceSchema, raw);
	return db().transaction(async (trx) => {
		const before = await repo.independence(trx, projectId);
		await repo.setIndependence(trx, projectId, v.rule, v.approvals);
		await recordEvent(trx, actor, {
			projectId,
			action: 'project.review-independence',
			subjectType: 'project',
			subjectId: projectId,
			before,
			after: { review_independence: v.rule, independent_approvals: v.approvals }
		});
		return v;
	});
}
export const independenceOf = (projectId: number) => repo.independence(db(), projectId);
