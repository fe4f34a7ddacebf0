import type { RequestEvent } from '@sveltejs/kit';
import { type ProjectAccess, requireRole, requireUser } from '../auth';
import type { Role } from '../identity/roles';
import { projectOfEvidence } from './service';

/** Who may upload and revise evidence (site administrators always may). */
export const UPLOAD_ROLES: readonly Role[] = ['engineer', 'analyst', 'certifier'];
/** Who may accept or reject evidence. */
export const REVIEW_ROLES: readonly Role[] = ['certifier'];
/** Who may set a requirement's model-versus-test tolerance. */
export const TOLERANCE_ROLES: readonly Role[] = ['engineer', 'analyst'];

/** The guard for routes keyed by an evidence id: find its project, then the one guard decides. */
export async function requireEvidenceRole(
	event: RequestEvent,
	evidenceId: number,
	roles?: readonly Role[]
): Promise<ProjectAccess> {
	requireUser(event);
	const project = await projectOfEvidence(evidenceId);
	return requireRole(event, project.key, roles);
}
