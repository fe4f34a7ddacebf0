import { fail, isHttpError, redirect } from '@sveltejs/kit';
import { formErrors } from '$lib/forms/errors';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { ServiceError } from '$lib/server/errors';
import { EVIDENCE_KINDS, KIND_LABELS, VERIFICATION_METHODS } from '$lib/server/evidence/schema';
import {
	listEvidence,
	projectRequirements,
	submittedFields,
	uploadEvidence
} from '$lib/server/evidence/service';
import { formatBytes } from '$lib/server/evidence/upload';
import type { Actions, PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, can } = await access(event, { project: event.params.key });
	const q = event.url.searchParams;
	const [list, requirements] = await Promise.all([
		listEvidence(project.id, {
			kind: q.get('kind') || undefined,
			review: q.get('review') || undefined,
			requirement: q.get('requirement') || undefined
		}).catch(() => listEvidence(project.id, {})),
		projectRequirements(project.id)
	]);
	return {
		project: { key: project.key, name: project.name },
		can,
		evidence: list.rows,
		filters: {
			kind: list.filters.kind ?? '',
			review: list.filters.review ?? '',
			requirement: list.filters.requirement ?? ''
		},
		requirements,
		kinds: EVIDENCE_KINDS.map((k) => ({ value: k, label: KIND_LABELS[k] })),
		methods: [...VERIFICATION_METHODS],
		maxBytes: config.evidenceMaxBytes,
		maxLabel: formatBytes(config.evidenceMaxBytes)
	};
}) satisfies PageServerLoad;

export const actions = {
	// The upload form without JavaScript: the multipart body is streamed exactly as through the API.
	upload: async (event) => {
		const { project } = await access(event, { project: event.params.key }, 'uploadEvidence');
		let id: number;
		try {
			const r = await uploadEvidence({
				project,
				actor: actorOf(event.locals),
				headers: event.request.headers,
				body: event.request.body
			});
			id = r.id;
		} catch (e) {
			if (e instanceof ServiceError) {
				const values = submittedFields.get(e) ?? {};
				return fail(e.status, {
					action: 'upload',
					values,
					errors: formErrors(e.message, e.fields, 'Nothing was stored')
				});
			}
			if (isHttpError(e)) throw e;
			throw e;
		}
		redirect(303, `/p/${project.key}/evidence/${id}`);
	}
} satisfies Actions;
