import { error, fail, redirect } from '@sveltejs/kit';
import { formErrors } from '$lib/forms/errors';
import { actorOf } from '$lib/server/audit';
import { requireRole } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { ServiceError } from '$lib/server/errors';
import { REVIEW_ROLES, TOLERANCE_ROLES, UPLOAD_ROLES } from '$lib/server/evidence/guard';
import {
	EVIDENCE_KINDS,
	KIND_LABELS,
	SIGN_OFF_MEANING,
	VERIFICATION_METHODS
} from '$lib/server/evidence/schema';
import {
	checkIntegrity,
	compareMeasured,
	evidenceHistory,
	getEvidence,
	parseRevision,
	projectOfEvidence,
	projectRequirements,
	reviewEvidence,
	reviseEvidence,
	setTolerance,
	submittedFields
} from '$lib/server/evidence/service';
import { formatBytes } from '$lib/server/evidence/upload';
import type { RequestEvent } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';

/** The guard, and the evidence must belong to the project in the address. */
async function guard(event: RequestEvent, roles?: Parameters<typeof requireRole>[2]) {
	const access = await requireRole(event, event.params.key!, roles);
	const id = Number(event.params.id);
	const owner = await projectOfEvidence(id).catch(() => null);
	if (!owner || owner.key !== access.project.key)
		error(404, { message: `There is no evidence ${id} in ${access.project.key}.` });
	return { ...access, id };
}

/** A refused action: its errors and what was submitted (text fields), so the form shows it again. */
function failed(action: string, e: unknown, fields: Record<string, FormDataEntryValue> = {}) {
	if (e instanceof ServiceError) {
		const typed = Object.fromEntries(
			Object.entries(fields).filter((f): f is [string, string] => typeof f[1] === 'string')
		);
		return fail(e.status, {
			action,
			values: submittedFields.get(e) ?? typed,
			errors: formErrors(e.message, e.fields, 'Nothing was stored')
		});
	}
	throw e;
}

export const load = (async (event) => {
	const { project, role, user, id } = await guard(event);
	let revision: number | undefined;
	try {
		revision = parseRevision(event.url.searchParams.get('revision'));
	} catch {
		revision = undefined;
	}
	const detail = await getEvidence(id);
	const shown =
		detail.revisions.find((r) => r.revision === (revision ?? detail.currentRevision)) ?? detail.revisions[0];
	const current = detail.revisions.find((r) => r.revision === detail.currentRevision)!;
	const [comparisons, history, requirements] = await Promise.all([
		shown.kind === 'frequency-response' && shown.measuredPoints
			? compareMeasured(id, shown.revision)
			: Promise.resolve([]),
		evidenceHistory(id),
		projectRequirements(project.id)
	]);
	const isAdmin = role === 'admin' || user.site_admin;
	return {
		project: { key: project.key, name: project.name },
		evidence: detail,
		shown,
		current,
		comparisons,
		history,
		requirements,
		kinds: EVIDENCE_KINDS.map((k) => ({ value: k, label: KIND_LABELS[k] })),
		methods: [...VERIFICATION_METHODS],
		meanings: SIGN_OFF_MEANING,
		maxBytes: config.evidenceMaxBytes,
		maxLabel: formatBytes(config.evidenceMaxBytes),
		can: {
			review:
				(isAdmin || REVIEW_ROLES.includes(role as never)) &&
				!current.review &&
				current.uploadedById !== user.id,
			reviewRole: isAdmin || REVIEW_ROLES.includes(role as never),
			revise: (isAdmin || UPLOAD_ROLES.includes(role as never)) && !detail.frozen,
			tolerance: isAdmin || TOLERANCE_ROLES.includes(role as never)
		},
		inlineKind: shown.contentType.startsWith('image/')
			? 'image'
			: shown.contentType === 'application/pdf'
				? 'pdf'
				: null
	};
}) satisfies PageServerLoad;

export const actions = {
	review: async (event) => {
		const { project, role, id } = await guard(event, REVIEW_ROLES);
		const fields = Object.fromEntries(await event.request.formData());
		try {
			await reviewEvidence({ evidenceId: id, project, actor: actorOf(event.locals), role, fields });
		} catch (e) {
			return failed('review', e, fields);
		}
		return { action: 'review', ok: true };
	},
	integrity: async (event) => {
		const { project, id } = await guard(event);
		const fields = Object.fromEntries(await event.request.formData());
		try {
			const revision = parseRevision(typeof fields.revision === 'string' ? fields.revision : null);
			const result = await checkIntegrity({
				evidenceId: id,
				revision,
				project,
				actor: actorOf(event.locals)
			});
			return { action: 'integrity', result };
		} catch (e) {
			return failed('integrity', e);
		}
	},
	revise: async (event) => {
		const { project, id } = await guard(event, UPLOAD_ROLES);
		try {
			await reviseEvidence({
				evidenceId: id,
				project,
				actor: actorOf(event.locals),
				headers: event.request.headers,
				body: event.request.body
			});
		} catch (e) {
			return failed('revise', e);
		}
		redirect(303, `/p/${project.key}/evidence/${id}`);
	},
	tolerance: async (event) => {
		const { project } = await guard(event, TOLERANCE_ROLES);
		const fields = Object.fromEntries(await event.request.formData());
		try {
			const r = await setTolerance({ project, actor: actorOf(event.locals), fields });
			return { action: 'tolerance', ok: true, requirement: r.requirement };
		} catch (e) {
			return failed('tolerance', e, fields);
		}
	}
} satisfies Actions;
