import { fail, redirect } from '@sveltejs/kit';
import { formErrors } from '$lib/forms/errors';
import { actorOf } from '$lib/server/audit';
import { access, inAddress } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { ServiceError } from '$lib/server/errors';
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
	projectRequirements,
	reviewEvidence,
	reviseEvidence,
	setTolerance,
	submittedFields
} from '$lib/server/evidence/service';
import { formatBytes } from '$lib/server/evidence/upload';
import { signerOf } from '$lib/server/identity/reauth';
import { signsWithProvider, startProviderSigning } from '$lib/server/identity/provider-signing';
import { ssoProvider } from '$lib/server/identity/sso';
import { reviewForm } from '$lib/server/evidence/schema';
import { parseOrThrow } from '$lib/server/errors';
import { MEANINGS } from '$lib/server/signatures/meanings';
import type { Actions, PageServerLoad } from './$types';

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
	const { project, user, can, resource } = await access(event, inAddress(event.params, 'evidence'));
	const id = resource.id;
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
		can,
		// The uploader of a revision may not review it (the service refuses it too).
		ownRevision: current.uploadedById === user.id,
		// An account without a password confirms its signature by a fresh login at the identity provider.
		signVia: (await signsWithProvider(Number(user.id))) ? (ssoProvider()?.name ?? null) : null,
		inlineKind: shown.contentType.startsWith('image/')
			? 'image'
			: shown.contentType === 'application/pdf'
				? 'pdf'
				: null
	};
}) satisfies PageServerLoad;

export const actions = {
	review: async (event) => {
		const { project, role, resource, user } = await access(
			event,
			inAddress(event.params, 'evidence'),
			'reviewEvidence'
		);
		const id = resource.id;
		const fields = Object.fromEntries(await event.request.formData());
		const { password: _password, ...typed } = fields;
		void _password;
		try {
			if (await signsWithProvider(Number(user.id))) {
				const v = parseOrThrow(reviewForm, typed);
				const act = v.decision === 'accepted' ? 'evidence.accept' : 'evidence.reject';
				const { next } = await startProviderSigning(user, event.url.origin, {
					projectId: project.id,
					act,
					meaning: MEANINGS[act],
					target: { type: 'evidence', id, revision: v.revision },
					fields: typed,
					returnTo: event.url.pathname
				});
				return { action: 'review', next };
			}
			const signer = await signerOf(event, user, fields);
			await reviewEvidence({ evidenceId: id, project, actor: actorOf(event.locals), role, fields, signer });
		} catch (e) {
			// The password is never sent back to the form.
			return failed('review', e, typed);
		}
		return { action: 'review', ok: true };
	},
	integrity: async (event) => {
		const { project, resource } = await access(event, inAddress(event.params, 'evidence'));
		const id = resource.id;
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
		const { project, resource } = await access(event, inAddress(event.params, 'evidence'), 'uploadEvidence');
		const id = resource.id;
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
		const { project } = await access(event, inAddress(event.params, 'evidence'), 'setTolerance');
		const fields = Object.fromEntries(await event.request.formData());
		try {
			const r = await setTolerance({ project, actor: actorOf(event.locals), fields });
			return { action: 'tolerance', ok: true, requirement: r.requirement };
		} catch (e) {
			return failed('tolerance', e, fields);
		}
	}
} satisfies Actions;
