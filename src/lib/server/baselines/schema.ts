import { z } from 'zod';

export const freezeForm = z.object({
	label: z
		.string({ message: 'Give the baseline a name.' })
		.trim()
		.min(1, 'Give the baseline a name.')
		.max(120, 'At most 120 characters.'),
	note: z.string().trim().max(2000, 'At most 2000 characters.').default('')
});
export type FreezeForm = z.infer<typeof freezeForm>;

/** "now" or a baseline id. */
export const compareSide = z.union([z.literal('now'), z.coerce.number().int().positive()], {
	message: 'Choose a baseline or "now".'
});
export const compareQuery = z.object({ from: compareSide, to: compareSide.default('now') });
