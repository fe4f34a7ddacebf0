import { z } from 'zod';

export const freezeForm = z.strictObject(
	{
		label: z
			.string({ message: 'Give the baseline a name.' })
			.trim()
			.min(1, 'Give the baseline a name.')
			.max(120, 'At most 120 characters.'),
		note: z.string({ message: 'A note is text.' }).trim().max(2000, 'At most 2000 characters.').default(''),
		// Freezing a state that an earlier baseline already froze (same manifest SHA-256) needs this.
		confirmUnchanged: z.boolean({ message: 'confirmUnchanged is true or false.' }).default(false)
	},
	{
		error: (iss: { code?: string; keys?: PropertyKey[] }) =>
			iss.code === 'unrecognized_keys'
				? `unknown field ${(iss.keys ?? []).map((k) => `"${String(k)}"`).join(', ')}: a freeze takes label, note, confirmUnchanged and password`
				: undefined
	}
);
export type FreezeForm = z.infer<typeof freezeForm>;

/** "now" or a baseline id. */
export const compareSide = z.union([z.literal('now'), z.coerce.number().int().positive()], {
	message: 'Choose a baseline or "now".'
});
export const compareQuery = z.object({ from: compareSide, to: compareSide.default('now') });
