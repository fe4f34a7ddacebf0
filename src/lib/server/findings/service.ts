import { z } from 'zod';
import { ASSURANCE_LEVELS } from '../../requirements/vocabulary';
import {
	ANALYSIS_LOOK,
	canSignMove,
	CAUSE_LABELS,
	FINDING_CAUSES,
	FINDING_LOOK,
	FINDING_STATES,
	isOpenFinding,
	OPEN_FINDING_STATES,
	SIGNED_MOVES,
	WORK_MOVES,
	type FindingCause,
	type FindingState,
	type SignedMove
} from '../../verification/index';
import { eventView, historyOf, recordEvent, type Actor } from '../audit';
import { config } from '../config';
import { db, type Db } from '../db';
import { parseOrThrow, ServiceError } from '../errors';
import type { Signer } from '../identity/reauth';
import type { ActingRole } from '../identity/roles';
import { mailUsers } from '../mail';
import { projectsForRequirements as members } from '../requirements/repo';
import type { SignedAct } from '../signatures/meanings';
import { sign, signaturesOf, type SignatureView } from '../signatures/service';
import { outcomeOf } from '../analyses/notices';
import { findings as repo, type FindingFilters, type FindingListRow, type FindingRow } from './repo';

// Findings: problems found on the way to a baseline, each against one requirement, with its cause (a
// run, an evidence revision, a model version), its assurance level and an assignee. They open by
// themselves (an analysis not proved / not applicable / in error, evidence rejected, model versus test
// beyond tolerance) or by hand; move open -> in work -> resolved; close by themselves when a later run
// or evidence revision clears the cause; otherwise closing, deferring (justification and target date)
// or declaring "not a defect" is a certifier's signed act. Every change is audited (the history) and
// mailed to the assignee.

const SIGNED_ACT: Record<SignedMove, SignedAct> = {
	closed: 'finding.close',
	deferred: 'finding.defer',
	'not-a-defect': 'finding.not-a-defect'
};

/** The signed act of a move (closed, deferred, not a defect), or null for a move that is not signed. */
export function signedActOfMove(state: string | undefined): SignedAct | null {
	return state && (SIGNED_MOVES as readonly string[]).includes(state)
		? SIGNED_ACT[state as SignedMove]
		: null;
}

const findingUrl = (key: string, id: number) => `${config.publicOrigin}/p/${key}/findings/${id}`;

async function mail(
	trx: Db,
	userId: number | null,
	f: { id: number; number: number; title: string },
	key: string,
	what: string
) {
	await mailUsers(
		trx,
		[userId],
		`[${key}] Finding F-${f.number}: ${what}`,
		`Finding F-${f.number} "${f.title}": ${what}.\n${findingUrl(key, Number(f.id))}`
	);
}

async function projectKey(trx: Db, projectId: number): Promise<string> {
	return (await trx('projects').where({ id: projectId }).first('key')).key;
}

interface OpenInput {
	projectId: number;
	requirementId: number;
	cause: FindingCause;
	title: string;
	description?: string;
	assigneeId: number | null;
	assuranceLevel: string;
	runId?: number | null;
	evidenceId?: number | null;
	evidenceRevision?: number | null;
	modelVersionId?: number | null;
}

/**
 * Open a finding in the caller's transaction. An automatic cause already open for the requirement
 * (and evidence item) opens nothing new: the open finding stands for it.
 */
export async function openFinding(trx: Db, actor: Actor, input: OpenInput): Promise<FindingRow> {
	if (input.cause !== 'manual') {
		const [existing] = await repo.ofCause(
			trx,
			{ requirementId: input.requirementId, cause: input.cause, evidenceId: input.evidenceId },
			OPEN_FINDING_STATES
		);
		if (existing) return existing;
	}
	const number = await repo.nextNumber(trx, input.projectId);
	const row = await repo.insert(trx, {
		project_id: input.projectId,
		number,
		requirement_id: input.requirementId,
		cause: input.cause,
		run_id: input.runId ?? null,
		evidence_id: input.evidenceId ?? null,
		evidence_revision: input.evidenceRevision ?? null,
		model_version_id: input.modelVersionId ?? null,
		assurance_level: input.assuranceLevel,
		title: input.title,
		description: input.description ?? '',
		state: 'open',
		assignee_id: input.assigneeId,
		opened_by: actor.userId ?? null,
		opened_by_label: actor.label
	});
	await recordEvent(trx, actor, {
		projectId: input.projectId,
		action: 'finding.open',
		subjectType: 'finding',
		subjectId: row.id,
		after: {
			number,
			requirement: input.requirementId,
			cause: input.cause,
			run: row.run_id,
			evidence: row.evidence_id,
			evidenceRevision: row.evidence_revision,
			modelVersion: row.model_version_id,
			assignee: row.assignee_id,
			title: row.title
		}
	});
	const key = await projectKey(trx, input.projectId);
	await mail(
		trx,
		row.assignee_id,
		row,
		key,
		`opened and assigned to you (${CAUSE_LABELS[input.cause].toLowerCase()})`
	);
	return row;
}

/** A later run or evidence revision cleared the cause: the findings it opened close by themselves. */
export async function clearCause(
	trx: Db,
	actor: Actor,
	c: {
		requirementId: number;
		cause: FindingCause;
		evidenceId?: number | null;
		runId?: number;
		evidenceRevision?: number;
	}
): Promise<number> {
	const rows = await repo.ofCause(trx, c, [...OPEN_FINDING_STATES, 'deferred']);
	for (const f of rows) {
		const after = await repo.update(trx, Number(f.id), {
			state: 'closed',
			cleared_by_run_id: c.runId ?? null,
			cleared_by_evidence_revision: c.evidenceRevision ?? null
		});
		await recordEvent(trx, actor, {
			projectId: Number(f.project_id),
			action: 'finding.cleared',
			subjectType: 'finding',
			subjectId: f.id,
			before: { state: f.state, version: f.version },
			after: {
				state: 'closed',
				version: after.version,
				run: c.runId ?? null,
				evidenceRevision: c.evidenceRevision ?? null
			}
		});
		const key = await projectKey(trx, Number(f.project_id));
		const by = c.runId ? `run ${c.runId}` : `evidence revision ${c.evidenceRevision}`;
		await mail(trx, f.assignee_id, f, key, `closed by itself: ${by} cleared its cause`);
	}
	return rows.length;
}

/**
 * After a run of a requirement's current revision finished (in the worker's transaction): not proved,
 * not applicable or an error opens a finding assigned to the model's owner; a proved verdict closes the
 * analysis findings of the requirement. Other outcomes (inconclusive) change nothing.
 */
export async function afterRun(trx: Db, actor: Actor, runId: number): Promise<number> {
	const r = await repo.runContext(trx, runId);
	if (!r || r.requirement_revision !== r.current_revision) return 0;
	const state = outcomeOf(r);
	if (state === 'verified')
		return clearCause(trx, actor, {
			requirementId: Number(r.requirement_id),
			cause: 'analysis',
			runId: Number(r.id)
		});
	if (state !== 'not-proved' && state !== 'not-applicable' && state !== 'error') return 0;
	const before = await repo.ofCause(
		trx,
		{ requirementId: Number(r.requirement_id), cause: 'analysis' },
		OPEN_FINDING_STATES
	);
	if (before.length) return 0;
	await openFinding(trx, actor, {
		projectId: Number(r.project_id),
		requirementId: Number(r.requirement_id),
		cause: 'analysis',
		runId: Number(r.id),
		modelVersionId: Number(r.model_version_id),
		assuranceLevel: r.assurance_level,
		assigneeId: r.model_owner == null ? null : Number(r.model_owner),
		title: `${r.identifier}: analysis ${ANALYSIS_LOOK[state].label.toLowerCase()} on ${r.model_name} v${r.model_version}`,
		description: `Run ${r.id} on model ${r.model_name} version ${r.model_version} gave "${ANALYSIS_LOOK[state].label}".`
	});
	return 1;
}

// ---- by hand ----

const id = (what: string) =>
	z.coerce
		.number({ error: `Choose ${what}.` })
		.int(`Choose ${what}.`)
		.positive(`Choose ${what}.`);
const raiseSchema = z
	.object({
		requirementId: id('a requirement'),
		title: z
			.string({ error: 'Give a title.' })
			.trim()
			.min(1, 'Give a title.')
			.max(200, 'At most 200 characters.'),
		description: z.string().trim().max(4000, 'At most 4000 characters.').default(''),
		assigneeId: z.preprocess((v) => (v === '' ? undefined : v), id('an assignee').optional())
	})
	.strict();

export async function raiseFinding(actor: Actor, projectId: number, raw: unknown) {
	const v = parseOrThrow(raiseSchema, raw);
	return db().transaction(async (trx) => {
		const req = await repo.requirementContext(trx, v.requirementId);
		if (!req || Number(req.project_id) !== projectId)
			throw new ServiceError(422, 'No such requirement in this project.', {
				requirementId: 'No such requirement in this project.'
			});
		const assignee = v.assigneeId ?? (req.owner_id == null ? null : Number(req.owner_id));
		if (assignee != null && !(await members.isMember(trx, projectId, assignee)))
			throw new ServiceError(422, 'The assignee must be a member of the project.', {
				assigneeId: 'Not a member of this project.'
			});
		const row = await openFinding(trx, actor, {
			projectId,
			requirementId: v.requirementId,
			cause: 'manual',
			title: v.title,
			description: v.description,
			assigneeId: assignee,
			assuranceLevel: req.assurance_level
		});
		return { id: Number(row.id), number: row.number };
	});
}

// ---- changes (API PATCH and the finding's page) ----

const changeSchema = z
	.object({
		version: z.coerce
			.number({ error: 'Send the version you read.' })
			.int()
			.positive('Send the version you read.'),
		state: z.enum(FINDING_STATES, { error: `state is one of ${FINDING_STATES.join(', ')}.` }).optional(),
		assigneeId: z.coerce
			.number({ error: 'assigneeId is a user id.' })
			.int()
			.positive('assigneeId is a user id.')
			.optional(),
		justification: z.string().trim().max(4000, 'At most 4000 characters.').optional(),
		targetDate: z
			.string()
			.trim()
			.regex(/^\d{4}-\d{2}-\d{2}$/, 'Write the date as YYYY-MM-DD.')
			.refine(
				(s) =>
					!Number.isNaN(new Date(s + 'T00:00:00Z').getTime()) &&
					new Date(s + 'T00:00:00Z').toISOString().slice(0, 10) === s,
				'That is not a calendar date.'
			)
			.optional(),
		comment: z.string().trim().max(4000, 'At most 4000 characters.').optional(),
		password: z.string().optional()
	})
	.strict();
export type FindingChange = z.infer<typeof changeSchema>;

export function parseChange(raw: unknown): FindingChange {
	return parseOrThrow(changeSchema, raw);
}

/** Whether a change is a signed act (it then needs a certifier and the password). */
export const isSignedChange = (c: FindingChange) =>
	!!c.state && (SIGNED_MOVES as readonly string[]).includes(c.state);

/**
 * Change a finding. `version` must be the one the caller read (else 409, nothing changed). Work moves
 * (open <-> in work -> resolved) and reassignment need no signature; closing, deferring and "not a
 * defect" do (`signer`, confirmed by the route; the capability is the route's).
 */
export async function changeFinding(
	actor: Actor,
	role: ActingRole,
	findingId: number,
	c: FindingChange,
	signer: Signer | null
) {
	return db().transaction(async (trx) => {
		const f = await repo.lock(trx, findingId);
		if (!f) throw new ServiceError(404, `There is no finding ${findingId}.`);
		if (c.version !== f.version)
			throw new ServiceError(
				409,
				`Finding F-${f.number} changed since version ${c.version}: it is at version ${f.version} now (${FINDING_LOOK[f.state as FindingState].label.toLowerCase()}). Nothing was changed.`,
				{ version: `The current version is ${f.version}.` },
				{ currentVersion: f.version, state: f.state }
			);
		const key = await projectKey(trx, Number(f.project_id));
		const from = f.state as FindingState;
		const patch: Partial<FindingRow> = {};
		let signatureId: number | null = null;
		if (c.assigneeId !== undefined && c.assigneeId !== Number(f.assignee_id ?? 0)) {
			if (!isOpenFinding(from))
				throw new ServiceError(409, `Finding F-${f.number} is ${from}; it is no longer assigned.`);
			if (!(await members.isMember(trx, Number(f.project_id), c.assigneeId)))
				throw new ServiceError(422, 'The assignee must be a member of the project.', {
					assigneeId: 'Not a member of this project.'
				});
			patch.assignee_id = c.assigneeId;
		}
		if (c.state && c.state !== from) {
			const to = c.state;
			if ((SIGNED_MOVES as readonly string[]).includes(to)) {
				const move = to as SignedMove;
				if (!canSignMove(from, move))
					throw new ServiceError(
						409,
						`A ${FINDING_LOOK[from].label.toLowerCase()} finding cannot be ${FINDING_LOOK[move].label.toLowerCase()}.`,
						{ state: 'Not from this state.' }
					);
				if (!signer)
					throw new ServiceError(400, 'Enter your password to sign.', {
						password: 'Enter your password to sign.'
					});
				if (move === 'deferred' && (!c.justification || !c.targetDate))
					throw new ServiceError(422, 'A deferral needs a justification and a target date.', {
						...(c.justification ? {} : { justification: 'Say why it may wait.' }),
						...(c.targetDate ? {} : { targetDate: 'Give the target date.' })
					});
				if (move !== 'deferred' && !c.comment)
					throw new ServiceError(422, 'Say why: the comment is part of the signature.', {
						comment: 'Say why.'
					});
				const sig = await sign(trx, {
					act: SIGNED_ACT[move],
					projectId: Number(f.project_id),
					target: { type: 'finding', id: Number(f.id), revision: f.version },
					content: {
						finding: `F-${f.number}`,
						version: f.version,
						requirement: Number(f.requirement_id),
						cause: f.cause,
						run: f.run_id,
						evidence: f.evidence_id,
						evidenceRevision: f.evidence_revision,
						title: f.title,
						from,
						to: move,
						justification: c.justification ?? null,
						targetDate: c.targetDate ?? null
					},
					comment: move === 'deferred' ? (c.comment ?? c.justification) : c.comment,
					actor,
					role,
					signer
				});
				signatureId = Number(sig.id);
				patch.signature_id = signatureId;
				if (move === 'deferred') {
					patch.justification = c.justification!;
					patch.target_date = c.targetDate!;
				} else if (c.comment) patch.justification = c.comment;
			} else if (!WORK_MOVES[from].includes(to)) {
				throw new ServiceError(
					409,
					`A ${FINDING_LOOK[from].label.toLowerCase()} finding cannot move to ${FINDING_LOOK[to].label.toLowerCase()}.`,
					{ state: 'Not from this state.' }
				);
			}
			patch.state = to;
		}
		if (Object.keys(patch).length === 0)
			return { id: Number(f.id), version: f.version, state: f.state, unchanged: true };
		const after = await repo.update(trx, Number(f.id), patch);
		await recordEvent(trx, actor, {
			projectId: Number(f.project_id),
			action: patch.state ? `finding.${patch.state}` : 'finding.assign',
			subjectType: 'finding',
			subjectId: f.id,
			before: { state: from, assignee: f.assignee_id, version: f.version },
			after: {
				state: after.state,
				assignee: after.assignee_id,
				version: after.version,
				signature: signatureId,
				justification: patch.justification,
				targetDate: patch.target_date
			}
		});
		if (patch.assignee_id !== undefined) await mail(trx, after.assignee_id, after, key, 'assigned to you');
		if (patch.state)
			await mail(
				trx,
				after.assignee_id,
				after,
				key,
				`now ${FINDING_LOOK[after.state as FindingState].label.toLowerCase()}`
			);
		return {
			id: Number(after.id),
			version: after.version,
			state: after.state,
			signature: signatureId,
			unchanged: false
		};
	});
}

// ---- reading ----

export interface FindingView {
	id: number;
	number: number;
	label: string;
	title: string;
	description: string;
	state: FindingState;
	stateLabel: string;
	symbol: string;
	tone: string;
	open: boolean;
	cause: FindingCause;
	causeLabel: string;
	requirement: { id: number; identifier: string; title: string };
	assuranceLevel: string;
	run: number | null;
	evidence: { id: number; revision: number | null; title: string | null } | null;
	modelVersion: { id: number; name: string | null; version: number | null } | null;
	assignee: { id: number; name: string | null; email: string | null } | null;
	openedBy: string;
	openedAt: string;
	updatedAt: string;
	version: number;
	clearedBy: { run: number | null; evidenceRevision: number | null } | null;
	justification: string | null;
	targetDate: string | null;
	signatureId: number | null;
}

export function viewOf(f: FindingListRow): FindingView {
	const state = f.state as FindingState;
	const look = FINDING_LOOK[state];
	return {
		id: Number(f.id),
		number: f.number,
		label: `F-${f.number}`,
		title: f.title,
		description: f.description,
		state,
		stateLabel: look.label,
		symbol: look.symbol,
		tone: look.tone,
		open: isOpenFinding(state),
		cause: f.cause as FindingCause,
		causeLabel: CAUSE_LABELS[f.cause as FindingCause] ?? f.cause,
		requirement: { id: Number(f.requirement_id), identifier: f.identifier, title: f.requirement_title },
		assuranceLevel: f.assurance_level,
		run: f.run_id == null ? null : Number(f.run_id),
		evidence:
			f.evidence_id == null
				? null
				: { id: Number(f.evidence_id), revision: f.evidence_revision, title: f.evidence_title },
		modelVersion:
			f.model_version_id == null
				? null
				: { id: Number(f.model_version_id), name: f.model_name, version: f.model_version },
		assignee:
			f.assignee_id == null
				? null
				: { id: Number(f.assignee_id), name: f.assignee_name, email: f.assignee_email },
		openedBy: f.opened_by_label,
		openedAt: new Date(f.opened_at).toISOString(),
		updatedAt: new Date(f.updated_at).toISOString(),
		version: f.version,
		clearedBy:
			f.cleared_by_run_id == null && f.cleared_by_evidence_revision == null
				? null
				: {
						run: f.cleared_by_run_id == null ? null : Number(f.cleared_by_run_id),
						evidenceRevision: f.cleared_by_evidence_revision
					},
		justification: f.justification,
		targetDate: f.target_date ?? null,
		signatureId: f.signature_id == null ? null : Number(f.signature_id)
	};
}

const listSchema = z
	.object({
		state: z
			.string()
			.optional()
			.transform((s, ctx) => {
				if (!s) return undefined;
				const parts = s.split(',').map((x) => x.trim());
				for (const p of parts)
					if (!(FINDING_STATES as readonly string[]).includes(p)) {
						ctx.addIssue({
							code: 'custom',
							message: `state is one or a comma list of ${FINDING_STATES.join(', ')}.`
						});
						return z.NEVER;
					}
				return parts;
			}),
		cause: z.enum(FINDING_CAUSES, { error: `cause is one of ${FINDING_CAUSES.join(', ')}.` }).optional(),
		assignee: z.coerce
			.number({ error: 'assignee is a user id.' })
			.int()
			.positive('assignee is a user id.')
			.optional(),
		requirement: z.coerce
			.number({ error: 'requirement is an id.' })
			.int()
			.positive('requirement is an id.')
			.optional(),
		assurance: z.enum(ASSURANCE_LEVELS, { error: 'assurance is one of A to E.' }).optional()
	})
	.strict();

/** Filters from a query string (API: a bad value is a 400 naming it). */
export function parseFilters(params: URLSearchParams): FindingFilters {
	const raw = Object.fromEntries([...params.entries()].filter(([, v]) => v !== ''));
	return parseOrThrow(listSchema, raw) as FindingFilters;
}

export async function listFindings(projectId: number, f: FindingFilters): Promise<FindingView[]> {
	return (await repo.list(db(), projectId, f)).map(viewOf);
}

/** Counts per state and the number open (project overview, coverage). */
export async function findingCounts(projectId: number, conn: Db = db()) {
	const byState = await repo.countByState(conn, projectId);
	const open = OPEN_FINDING_STATES.reduce((n, s) => n + (byState[s] ?? 0), 0);
	return { open, deferred: byState.deferred ?? 0, byState };
}

/** Deferred findings, for a baseline's manifest. */
export async function deferredFindings(projectId: number, conn: Db) {
	const rows = await repo.list(conn, projectId, { state: ['deferred'] });
	return rows.map((f) => ({
		id: Number(f.id),
		label: `F-${f.number}`,
		title: f.title,
		requirement: f.identifier,
		assuranceLevel: f.assurance_level,
		cause: f.cause,
		justification: f.justification,
		targetDate: f.target_date ?? null,
		signature: f.signature_id == null ? null : Number(f.signature_id)
	}));
}

export async function getFinding(findingId: number) {
	const f = await repo.get(db(), findingId);
	if (!f) throw new ServiceError(404, `There is no finding ${findingId}.`);
	const [history, signatures] = await Promise.all([
		historyOf(db(), 'finding', findingId),
		signaturesOf(db(), 'finding', findingId, null, 'version')
	]);
	return {
		finding: viewOf(f),
		projectId: Number(f.project_id),
		signatures: signatures as SignatureView[],
		history: history.map(eventView)
	};
}
