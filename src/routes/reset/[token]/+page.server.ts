import { error, fail, redirect } from '@sveltejs/kit';
import { ServiceError, fieldErrors } from '$lib/server/errors';
import { setPasswordForm } from '$lib/server/identity/schema';
import { openPasswordReset, resetPassword } from '$lib/server/identity/service';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ params }) => {
	const reset = await openPasswordReset(params.token);
	if (!reset)
		error(404, { message: 'This reset link is not valid any more (used or expired). Ask for a new one.' });
	return {};
}) satisfies PageServerLoad;

export const actions = {
	default: async ({ request, params }) => {
		const form = Object.fromEntries(await request.formData());
		const parsed = setPasswordForm.safeParse(form);
		if (!parsed.success) return fail(400, { errors: fieldErrors(parsed.error), message: null });
		try {
			await resetPassword(params.token, parsed.data.password);
		} catch (e) {
			if (e instanceof ServiceError) return fail(e.status, { errors: e.fields, message: e.message });
			throw e;
		}
		redirect(303, '/signin?reset=1');
	}
} satisfies Actions;
