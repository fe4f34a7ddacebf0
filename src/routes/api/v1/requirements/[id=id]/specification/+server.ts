import { json } from '@sveltejs/kit';
import { endpoint, readJson } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { parseOrThrow } from '$lib/server/errors';
import { specificationInput } from '$lib/server/requirements/schema';
import { getRequirement, setSpecification } from '$lib/server/requirements/service';
import type { RequestHandler } from './$types';

// Set the stability specification: { check, requiredMargin?, operatingPoints?, modelId, modelVersionId?,
// template?, baseVersion? }. Each change is a new immutable version; the same content again changes nothing.
export const PUT = endpoint(async (event) => {
	const requirementId = Number(event.params.id);
	await access(event, { requirement: requirementId }, 'writeRequirements');
	const input = parseOrThrow(specificationInput, await readJson(event));
	const s = await setSpecification(actorOf(event.locals), requirementId, input);
	const r = await getRequirement(requirementId);
	return json(
		{ unchanged: s.unchanged, specification: r?.specification ?? null },
		{ status: s.unchanged ? 200 : 201 }
	);
}) satisfies RequestHandler;
