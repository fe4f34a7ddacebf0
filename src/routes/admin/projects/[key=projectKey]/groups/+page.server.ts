import { error, fail } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { ServiceError, fieldErrors, type FieldErrors } from '$lib/server/errors';
import { ROLE_LABELS, ROLES } from '$lib/server/identity/roles';
import { projectByKey } from '$lib/server/identity/service';
import {
	addGroupRole,
	listGroupRoles,
	removeGroupRole,
	setGroupRole,
	ssoProvider
} from '$lib/server/identity/sso';
import { SSO_ROLE_PRECEDENCE } from '$lib/server/identity/sso-rules';
import { addGroupRoleForm, removeGroupRoleForm, setGroupRoleForm } from '$lib/server/identity/sso-schema';
import type { Actions, PageServerLoad } from './$types';

// The site administrator's mapping of identity-provider groups to roles in one project.
async function project(key: string) {
	const p = await projectByKey(key);
	if (!p) error(404, { message: `There is no project ${key}.` });
	return p;
}

const refused = (action: string, e: unknown, values?: Record<string, string>) => {
	if (!(e instanceof ServiceError)) throw e;
	return fail(e.status, { action, values, errors: { ...e.fields, _: e.message } as FieldErrors });
};

export const load = (async (event) => {
	await access(event, 'site');
	const p = await project(event.params.key);
	const rows = await listGroupRoles(p.id);
	const sso = ssoProvider();
	return {
		project: { key: p.key, name: p.name },
		provider: sso ? { name: sso.name, issuer: sso.issuer } : null,
		mappings: rows.map((r) => ({ id: Number(r.id), group: r.group_name, role: r.role })),
		roles: ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] })),
		precedence: [...SSO_ROLE_PRECEDENCE]
	};
}) satisfies PageServerLoad;

export const actions = {
	add: async (event) => {
		await access(event, 'site');
		const p = await project(event.params.key);
		const form = Object.fromEntries(await event.request.formData());
		const values = { group: String(form.group ?? ''), role: String(form.role ?? '') };
		const parsed = addGroupRoleForm.safeParse(form);
		if (!parsed.success) return fail(400, { action: 'add', values, errors: fieldErrors(parsed.error) });
		try {
			await addGroupRole(actorOf(event.locals), p.id, parsed.data);
		} catch (e) {
			return refused('add', e, values);
		}
		return { action: 'add', added: parsed.data.group };
	},
	setRole: async (event) => {
		await access(event, 'site');
		const p = await project(event.params.key);
		const parsed = setGroupRoleForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'setRole', errors: fieldErrors(parsed.error) });
		try {
			await setGroupRole(actorOf(event.locals), p.id, parsed.data.id, parsed.data.role);
		} catch (e) {
			return refused('setRole', e);
		}
		return { action: 'setRole', ok: true };
	},
	remove: async (event) => {
		await access(event, 'site');
		const p = await project(event.params.key);
		const parsed = removeGroupRoleForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'remove', errors: fieldErrors(parsed.error) });
		try {
			await removeGroupRole(actorOf(event.locals), p.id, parsed.data.id);
		} catch (e) {
			return refused('remove', e);
		}
		return { action: 'remove', ok: true };
	}
} satisfies Actions;
