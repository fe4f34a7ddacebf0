import { z } from 'zod';
import { ROLES } from './roles';

export const email = z
	.string({ error: 'Enter an e-mail address.' })
	.trim()
	.min(1, 'Enter an e-mail address.')
	.max(254, 'An e-mail address has at most 254 characters.')
	.pipe(z.email({ error: 'This is not a valid e-mail address.' }))
	.transform((v) => v.toLowerCase());

export const password = z
	.string({ error: 'Enter a password.' })
	.min(10, 'Use at least 10 characters.')
	.max(200, 'Use at most 200 characters.');

export const displayName = z
	.string({ error: 'Enter a name.' })
	.trim()
	.min(1, 'Enter a name.')
	.max(100, 'Use at most 100 characters.');

export const projectKey = z
	.string({ error: 'Enter a key.' })
	.trim()
	.toUpperCase()
	.regex(/^[A-Z][A-Z0-9]{1,9}$/, 'A key is 2–10 capital letters or digits, starting with a letter.');

export const role = z.enum(ROLES, { error: 'Choose one of engineer, analyst, certifier, viewer.' });

export const signInForm = z.object({
	email,
	password: z.string({ error: 'Enter your password.' }).min(1, 'Enter your password.').max(200, 'Too long.')
});

export const createProjectForm = z.object({
	key: projectKey,
	name: z.string().trim().min(1, 'Enter a name.').max(120, 'Use at most 120 characters.'),
	description: z.string().trim().max(2000, 'Use at most 2,000 characters.').default('')
});

export const inviteForm = z.object({ email, role, displayName: displayName.optional() });

export const membershipForm = z.object({
	userId: z.coerce.number({ error: 'Missing user.' }).int().positive('Missing user.'),
	role
});

export const removeMembershipForm = z.object({
	userId: z.coerce.number({ error: 'Missing user.' }).int().positive('Missing user.')
});

export const setPasswordForm = z
	.object({ displayName: displayName.optional(), password, confirm: z.string() })
	.refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords differ.' });

export const resetRequestForm = z.object({ email });

export const userFlagsForm = z.object({
	userId: z.coerce.number({ error: 'Missing user.' }).int().positive('Missing user.'),
	disabled: z.enum(['true', 'false']).transform((v) => v === 'true')
});
