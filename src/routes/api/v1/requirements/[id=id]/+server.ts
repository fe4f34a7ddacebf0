import { json } from '@sveltejs/kit';
import { endpoint, readJson } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { parseOrThrow } from '$lib/server/errors';
import { reviseRequirement as reviseSchema } from '$lib/server/requirements/schema';
import { getRequirement, reviseRequirement } from '$lib/server/requirements/service';
import type { RequestHandler } from './$types';

export const GET = endpoint(async (event) => {
	const requirementId = Number(event.params.id);
	await access(event, { requirement: requirementId });
	return json({ requirement: await getRequirement(requirementId) });
}) satisfies RequestHandler;

// Update: { revision: <the revision you edited>, ...fields to change, changeNote? }.
// A stale revision answers 409 with currentRevision and what changed since (yours / theirs).
export const PATCH = endpoint(async (event) => {
	const requirementId = Number(event.params.id);
	await access(event, { requirement: requirementId }, 'writeRequirements');
	const input = parseOrThrow(reviseSchema, await readJson(event));
	const r = await reviseRequirement(actorOf(event.locals), requirementId, input);
	return json({ unchanged: r.unchanged, requirement: await getRequirement(requirementId) });
}) satisfies RequestHandler;
