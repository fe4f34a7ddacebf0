import { fail } from '@sveltejs/kit';
import { fieldErrors, type FieldErrors } from '$lib/server/errors';
import { resetRequestForm } from '$lib/server/identity/schema';
import { requestPasswordReset } from '$lib/server/identity/service';
import type { Actions } from './$types';

export const actions = {
	default: async ({ request }) => {
		const form = Object.fromEntries(await request.formData());
		const values = { email: typeof form.email === 'string' ? form.email : '' };
		const parsed = resetRequestForm.safeParse(form);
		if (!parsed.success) return fail(400, { values, errors: fieldErrors(parsed.error), sent: false });
		await requestPasswordReset(parsed.data.email);
		// The same answer whether or not the address has an account.
		return { values, errors: {} as FieldErrors, sent: true };
	}
} satisfies Actions;
