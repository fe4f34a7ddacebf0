import { z } from 'zod';
import { ASSURANCE_LEVELS, LEVELS, METHODS } from '../../requirements/vocabulary';
import { COMBINED_STATES, COVERAGE_COUNTS, countWords, type CoverageCount } from '../../verification/index';

// Query parameters of the trace-matrix API (and of its exports).

export const MATRIX_SORTS = [
	'identifier',
	'title',
	'level',
	'assurance',
	'state',
	'owner',
	'lastChange'
] as const;

const emptyToUndefined = (v: unknown) => (v === '' || v === null ? undefined : v);

export const matrixQuery = z.object({
	state: z.preprocess(
		(v) => (typeof v === 'string' && v !== '' ? v.split(',') : emptyToUndefined(v)),
		z
			.array(z.enum(COMBINED_STATES, { message: `Use one or more of ${COMBINED_STATES.join(', ')}.` }))
			.optional()
	),
	level: z.preprocess(
		emptyToUndefined,
		z.enum(LEVELS, { message: 'Use system, subsystem or loop.' }).optional()
	),
	assurance: z.preprocess(emptyToUndefined, z.enum(ASSURANCE_LEVELS, { message: 'Use A to E.' }).optional()),
	method: z.preprocess(
		emptyToUndefined,
		z.enum(METHODS, { message: 'Use analysis, test, inspection or demonstration.' }).optional()
	),
	owner: z.preprocess(
		emptyToUndefined,
		z.coerce.number({ message: 'An owner is a user id.' }).int().positive().optional()
	),
	// One count of the coverage dashboard (src/lib/verification/coverage.ts): exactly the rows it counted.
	count: z.preprocess(
		emptyToUndefined,
		z
			.enum(COVERAGE_COUNTS as [string, ...string[]], {
				message: 'Use a coverage count: state.<state>, how.<how verified> or blocker.<kind>.'
			})
			.optional()
	),
	q: z.preprocess(emptyToUndefined, z.string().trim().max(200, 'At most 200 characters.').optional()),
	sort: z.preprocess(emptyToUndefined, z.enum(MATRIX_SORTS).default('identifier')),
	dir: z.preprocess(emptyToUndefined, z.enum(['asc', 'desc']).default('asc')),
	limit: z.preprocess(
		emptyToUndefined,
		z.coerce.number().int().min(1).max(1000, 'At most 1000 rows per page.').default(100)
	),
	offset: z.preprocess(emptyToUndefined, z.coerce.number().int().min(0).default(0)),
	all: z.preprocess(emptyToUndefined, z.enum(['0', '1']).optional())
});
export type MatrixQuery = z.infer<typeof matrixQuery>;

/** The query parameters of a URL as an object for matrixQuery. */
export function paramsOf(url: URL): Record<string, string> {
	return Object.fromEntries(url.searchParams.entries());
}

/** The filters of a query in words, for the cover sheet and the audit trail. */
export function filtersText(q: MatrixQuery): string {
	const parts: string[] = [];
	if (q.state?.length) parts.push(`state ${q.state.join(' or ')}`);
	if (q.level) parts.push(`level ${q.level}`);
	if (q.assurance) parts.push(`assurance level ${q.assurance}`);
	if (q.method) parts.push(`method ${q.method}`);
	if (q.owner) parts.push(`owner #${q.owner}`);
	if (q.count) parts.push(countWords(q.count as CoverageCount));
	if (q.q) parts.push(`text "${q.q}"`);
	return parts.join(', ');
}
