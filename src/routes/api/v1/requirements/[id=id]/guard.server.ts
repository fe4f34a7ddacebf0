import { error, type RequestEvent } from '@sveltejs/kit';
import { requireRole, requireUser } from '$lib/server/auth';
import type { Role } from '$lib/server/identity/roles';
import { projectOfRequirement } from '$lib/server/requirements/service';

/** Routes keyed by a requirement id: find its project, then the one guard decides. */
export async function requireRequirementRole(event: RequestEvent, roles?: readonly Role[]) {
	const id = Number(event.params.id);
	const found = await projectOfRequirement(id);
	// Authenticate before answering 404, so an anonymous caller learns nothing about ids.
	if (!found) {
		requireUser(event);
		error(404, { message: `There is no requirement ${id}.` });
	}
	const access = await requireRole(event, found.projectKey, roles);
	return { ...access, requirementId: id };
}
