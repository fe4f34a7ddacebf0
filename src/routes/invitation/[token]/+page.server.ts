import { error, fail, redirect } from '@sveltejs/kit';
import { ServiceError, fieldErrors, type FieldErrors } from '$lib/server/errors';
import { setPasswordForm } from '$lib/server/identity/schema';
import { acceptInvitation, accountExists, openInvitation } from '$lib/server/identity/service';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ params }) => {
	const inv = await openInvitation(params.token);
	if (!inv) error(404, { message: 'This invitation link is not valid any more (used or expired).' });
	const existing = await accountExists(inv.email);
	return {
		email: inv.email,
		role: inv.role,
		projectKey: inv.project_key,
		projectName: inv.project_name,
		existing
	};
}) satisfies PageServerLoad;

export const actions = {
	default: async ({ request, params }) => {
		const inv = await openInvitation(params.token);
		if (!inv)
			return fail(404, { errors: {} as FieldErrors, message: 'This invitation link is not valid any more.' });
		const existing = await accountExists(inv.email);
		const form = Object.fromEntries(await request.formData());
		// The name is shown again after a refusal; the passwords never are.
		const values = { displayName: typeof form.displayName === 'string' ? form.displayName : '' };
		let input: { displayName?: string; password?: string } = {};
		if (!existing) {
			const parsed = setPasswordForm.safeParse(form);
			if (!parsed.success) return fail(400, { values, errors: fieldErrors(parsed.error), message: null });
			if (!parsed.data.displayName)
				return fail(400, { values, errors: { displayName: 'Enter a name.' } as FieldErrors, message: null });
			input = parsed.data;
		}
		try {
			await acceptInvitation(params.token, input);
		} catch (e) {
			if (e instanceof ServiceError) return fail(e.status, { values, errors: e.fields, message: e.message });
			throw e;
		}
		redirect(303, `/signin?redirectTo=${encodeURIComponent('/p/' + inv.project_key)}`);
	}
} satisfies Actions;
