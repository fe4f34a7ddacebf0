import { error, fail } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { ServiceError, fieldErrors, type FieldErrors } from '$lib/server/errors';
import { ROLE_LABELS, ROLES } from '$lib/server/identity/roles';
import { inviteForm, membershipForm, removeMembershipForm } from '$lib/server/identity/schema';
import {
	invite,
	listMembers,
	listPendingInvitations,
	projectByKey,
	removeMembership,
	setMembership
} from '$lib/server/identity/service';
import { INDEPENDENCE_RULES, independenceOf, setIndependence } from '$lib/server/requirements/review';
import type { Actions, PageServerLoad } from './$types';

async function project(key: string) {
	const p = await projectByKey(key);
	if (!p) error(404, { message: `There is no project ${key}.` });
	return p;
}

export const load = (async (event) => {
	await access(event, 'site');
	const p = await project(event.params.key);
	const [members, invitations, independence] = await Promise.all([
		listMembers(p.id),
		listPendingInvitations(p.id),
		independenceOf(p.id)
	]);
	return {
		project: { key: p.key, name: p.name, description: p.description },
		members: members.map((m) => ({
			userId: m.user_id,
			email: m.email,
			name: m.display_name,
			role: m.role,
			disabled: m.disabled
		})),
		invitations: invitations.map((i) => ({
			id: i.id,
			email: i.email,
			role: i.role,
			expiresAt: new Date(i.expires_at).toISOString()
		})),
		roles: ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] })),
		independence: {
			rule: independence.review_independence,
			approvals: independence.independent_approvals,
			rules: Object.entries(INDEPENDENCE_RULES).map(([value, label]) => ({ value, label }))
		}
	};
}) satisfies PageServerLoad;

export const actions = {
	invite: async (event) => {
		const { user: admin } = await access(event, 'site');
		const p = await project(event.params.key);
		const form = Object.fromEntries(await event.request.formData());
		const values = { email: String(form.email ?? ''), role: String(form.role ?? '') };
		const parsed = inviteForm.safeParse(form);
		if (!parsed.success) return fail(400, { action: 'invite', values, errors: fieldErrors(parsed.error) });
		const r = await invite(actorOf(event.locals), {
			projectId: p.id,
			projectName: p.name,
			email: parsed.data.email,
			role: parsed.data.role,
			invitedBy: admin
		});
		return { action: 'invite', invited: parsed.data.email, existingUser: r.existingUser };
	},
	setRole: async (event) => {
		await access(event, 'site');
		const p = await project(event.params.key);
		const parsed = membershipForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'setRole', errors: fieldErrors(parsed.error) });
		try {
			await setMembership(actorOf(event.locals), p.id, parsed.data.userId, parsed.data.role);
		} catch (e) {
			if (e instanceof ServiceError)
				return fail(e.status, { action: 'setRole', errors: { ...e.fields, _: e.message } as FieldErrors });
			throw e;
		}
		return { action: 'setRole', ok: true };
	},
	remove: async (event) => {
		await access(event, 'site');
		const p = await project(event.params.key);
		const parsed = removeMembershipForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'remove', errors: fieldErrors(parsed.error) });
		try {
			await removeMembership(actorOf(event.locals), p.id, parsed.data.userId);
		} catch (e) {
			if (e instanceof ServiceError)
				return fail(e.status, { action: 'remove', errors: { ...e.fields, _: e.message } as FieldErrors });
			throw e;
		}
		return { action: 'remove', ok: true };
	},
	independence: async (event) => {
		await access(event, 'site');
		const p = await project(event.params.key);
		const form = Object.fromEntries(await event.request.formData());
		try {
			await setIndependence(actorOf(event.locals), p.id, form);
		} catch (e) {
			if (e instanceof ServiceError)
				return fail(e.status, {
					action: 'independence',
					errors: { ...e.fields, _: e.message } as FieldErrors
				});
			throw e;
		}
		return { action: 'independence', ok: true };
	}
} satisfies Actions;
