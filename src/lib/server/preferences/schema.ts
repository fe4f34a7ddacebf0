import { z } from 'zod';
import { CHOOSABLE_COLUMNS } from '../../trace/columns';

// What a person may store about how a project's pages look to them. Strict: an unknown field or
// column is refused with its name, never dropped.
export const traceColumns = z
	.object({
		columns: z
			.array(
				z.enum(CHOOSABLE_COLUMNS, {
					error: () => `must be one of ${CHOOSABLE_COLUMNS.join(', ')} (identifier and state always show)`
				})
			)
			.max(CHOOSABLE_COLUMNS.length)
			.refine((c) => new Set(c).size === c.length, 'names a column twice')
	})
	.strict();

export type TraceColumns = z.infer<typeof traceColumns>;
