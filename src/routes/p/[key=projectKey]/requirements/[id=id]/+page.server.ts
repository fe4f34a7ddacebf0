import { error, fail } from '@sveltejs/kit';
import { SPEC_TEMPLATES } from '$lib/requirements/templates';
import { actorOf } from '$lib/server/audit';
import { access, inAddress } from '$lib/server/auth';
import { ServiceError, type FieldErrors } from '$lib/server/errors';
import {
	formFieldErrors,
	linkForm,
	parseSpecificationForm,
	specFormErrorKey,
	unlinkForm
} from '$lib/server/requirements/schema';
import {
	addLink,
	modelsForSpecs,
	removeLink,
	requirementPage,
	requirementOptions,
	setSpecification
} from '$lib/server/requirements/service';
import { listFindings } from '$lib/server/findings/service';
import { signerOf } from '$lib/server/identity/reauth';
import {
	addComment,
	decideReview,
	parseDecision,
	requestReview,
	reviewOf
} from '$lib/server/requirements/review';
import { signsWithProvider, startProviderSigning } from '$lib/server/identity/provider-signing';
import { ssoProvider } from '$lib/server/identity/sso';
import { projectMembers } from '$lib/server/requirements/service';
import { MEANINGS } from '$lib/server/signatures/meanings';
import type { Actions, PageServerLoad } from './$types';

/** A review form's fields (the password is taken apart: it is checked, never passed on or echoed). */
async function reviewFields(event: { request: Request }) {
	const fd = await event.request.formData();
	const { password, ...fields } = Object.fromEntries(
		[...fd.entries()].filter((e): e is [string, string] => typeof e[1] === 'string' && e[0] !== 'reviewers')
	);
	return { fields, password: password ?? '', reviewers: fd.getAll('reviewers').map(String) };
}

function failWith(action: string, e: unknown, extra: Record<string, unknown> = {}) {
	if (e instanceof ServiceError) {
		return fail(e.status, { action, errors: { ...e.fields, _: e.message } as FieldErrors, ...extra });
	}
	throw e;
}

export const load = (async (event) => {
	const { project, can, resource } = await access(event, inAddress(event.params, 'requirement'));
	// The link and specification forms (and so their choices) are shown to writers only.
	const [found, options, models, review, members, findings] = await Promise.all([
		requirementPage(resource.id),
		can.writeRequirements ? requirementOptions(project.id) : [],
		can.writeRequirements ? modelsForSpecs(project.id) : [],
		reviewOf(resource.id),
		can.writeRequirements ? projectMembers(project.id) : [],
		listFindings(project.id, { requirement: resource.id })
	]);
	if (!found) error(404, { message: 'There is no such requirement in this project.' });
	const { requirement: r, history } = found;
	const linked = new Set([r.id, ...r.parents.map((p) => p.id)]);
	return {
		project: { key: project.key, name: project.name },
		can,
		requirement: r,
		history,
		parentOptions: options
			.filter((o) => !linked.has(Number(o.id)))
			.map((o) => ({ id: Number(o.id), identifier: o.identifier, title: o.title })),
		models,
		templates: SPEC_TEMPLATES,
		review,
		reviewerOptions: members
			.filter((m) => Number(m.id) !== review.authorId && m.role !== 'viewer')
			.map((m) => ({ id: Number(m.id), name: m.name, role: m.role })),
		meanings: { approve: MEANINGS['requirement.approve'], return: MEANINGS['requirement.return'] },
		findings,
		userId: event.locals.user!.id,
		// An account without a password confirms its signature by a fresh login at the identity provider.
		signVia: (await signsWithProvider(Number(event.locals.user!.id))) ? (ssoProvider()?.name ?? null) : null
	};
}) satisfies PageServerLoad;

export const actions = {
	addLink: async (event) => {
		const { resource: r } = await access(event, inAddress(event.params, 'requirement'), 'writeRequirements');
		const parsed = linkForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'addLink', errors: formFieldErrors(parsed.error) });
		try {
			await addLink(actorOf(event.locals), r.id, parsed.data.parentId);
		} catch (e) {
			return failWith('addLink', e);
		}
		return { action: 'addLink', ok: true };
	},
	removeLink: async (event) => {
		const { resource: r } = await access(event, inAddress(event.params, 'requirement'), 'writeRequirements');
		const parsed = unlinkForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'removeLink', errors: formFieldErrors(parsed.error) });
		try {
			await removeLink(actorOf(event.locals), r.id, parsed.data.linkId);
		} catch (e) {
			return failWith('removeLink', e);
		}
		return { action: 'removeLink', ok: true };
	},
	requestReview: async (event) => {
		const { resource: r } = await access(event, inAddress(event.params, 'requirement'), 'writeRequirements');
		const { fields, reviewers } = await reviewFields(event);
		try {
			await requestReview(actorOf(event.locals), r.id, { ...fields, reviewers });
		} catch (e) {
			return failWith('requestReview', e);
		}
		return { action: 'requestReview', ok: true };
	},
	comment: async (event) => {
		const { resource: r } = await access(event, inAddress(event.params, 'requirement'), 'reviewRequirements');
		const { fields } = await reviewFields(event);
		try {
			await addComment(actorOf(event.locals), r.id, fields);
		} catch (e) {
			return failWith('comment', e, { values: fields });
		}
		return { action: 'comment', ok: true };
	},
	decide: async (event) => {
		const {
			resource: r,
			role,
			user,
			project
		} = await access(event, inAddress(event.params, 'requirement'), 'reviewRequirements');
		const { fields, password } = await reviewFields(event);
		try {
			if (await signsWithProvider(user.id)) {
				const v = parseDecision(fields);
				const act = v.decision === 'approve' ? 'requirement.approve' : 'requirement.return';
				const { next } = await startProviderSigning(user, event.url.origin, {
					projectId: project.id,
					act,
					meaning: MEANINGS[act],
					target: { type: 'requirement', id: r.id, revision: v.revision },
					fields,
					returnTo: event.url.pathname
				});
				return { action: 'decide', next };
			}
			const signer = await signerOf(event, user, { password });
			const d = await decideReview(actorOf(event.locals), role, r.id, fields, signer);
			return { action: 'decide', ok: true, state: d.state, missing: d.independentApprovalsMissing };
		} catch (e) {
			return failWith('decide', e, { values: fields });
		}
	},
	setSpec: async (event) => {
		const { resource: r } = await access(event, inAddress(event.params, 'requirement'), 'writeRequirements');
		const raw = Object.fromEntries(await event.request.formData());
		const values = Object.fromEntries(
			Object.entries(raw).map(([k, v]) => [k, typeof v === 'string' ? v : ''])
		);
		const parsed = parseSpecificationForm(values);
		if (!parsed.success)
			return fail(400, { action: 'setSpec', values, errors: parsed.errors as FieldErrors });
		try {
			const s = await setSpecification(actorOf(event.locals), r.id, parsed.data);
			return { action: 'setSpec', ok: true, version: s.version, unchanged: s.unchanged };
		} catch (e) {
			if (e instanceof ServiceError) {
				const errors: FieldErrors = { _: e.message };
				for (const [k, v] of Object.entries(e.fields)) errors[specFormErrorKey(k)] = v;
				return fail(e.status, { action: 'setSpec', values, errors });
			}
			throw e;
		}
	}
} satisfies Actions;
