import { type Actor, recordEvent } from '../audit';
import { db } from '../db';
import { ServiceError, parseOrThrow } from '../errors';
import { DEFAULT_TOLERANCE } from './comparison';
import { evidenceRepo as repo } from './repo';
import type { ProjectRef } from './revision';
import { toleranceForm } from './schema';

// The model-vs-test tolerance of a requirement (default 10 % and 5 degrees, comparison.ts).

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
