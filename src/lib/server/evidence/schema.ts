import { z } from 'zod';
import { MEANINGS } from '../signatures/meanings';
import { FREQUENCY_UNITS, LAYOUTS, MAGNITUDE_UNITS } from './frequency-response';

export const EVIDENCE_KINDS = ['frequency-response', 'test-report', 'log', 'other'] as const;
export type EvidenceKind = (typeof EVIDENCE_KINDS)[number];
export const KIND_LABELS: Record<EvidenceKind, string> = {
	'frequency-response': 'Measured frequency response',
	'test-report': 'Test report',
	log: 'Log',
	other: 'Other'
};

export const VERIFICATION_METHODS = ['test', 'inspection', 'demonstration'] as const;
export type VerificationMethod = (typeof VERIFICATION_METHODS)[number];

export const DECISIONS = ['accepted', 'rejected'] as const;
export type Decision = (typeof DECISIONS)[number];

/** What a certifier's decision means: the meaning of its signature (signatures/meanings.ts). */
export const SIGN_OFF_MEANING: Record<Decision, string> = {
	accepted: MEANINGS['evidence.accept'],
	rejected: MEANINGS['evidence.reject']
};

// Empty form fields mean "not given".
const blank = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? undefined : v);
const optional = <T extends z.ZodType>(s: T) => z.preprocess(blank, s.optional());

const isoDate = z
	.string()
	.trim()
	.regex(/^\d{4}-\d{2}-\d{2}$/, 'Write the date as YYYY-MM-DD.')
	.refine((s) => {
		const d = new Date(s + 'T00:00:00Z');
		return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === s && d.getUTCFullYear() >= 1900;
	}, 'That is not a calendar date.');

const unitFields = {
	frequencyUnit: optional(z.enum(FREQUENCY_UNITS, { error: 'Choose Hz or rad/s.' })),
	magnitudeUnit: optional(z.enum(MAGNITUDE_UNITS, { error: 'Choose dB or abs (absolute ratio).' })),
	layout: optional(z.enum(LAYOUTS, { error: 'Choose magnitude-phase or real-imaginary.' }))
};

export const uploadFields = z.object({
	title: z
		.string({ error: 'Give the evidence a title.' })
		.trim()
		.min(1, 'Give the evidence a title.')
		.max(200, 'At most 200 characters.'),
	kind: z.enum(EVIDENCE_KINDS, { error: `Choose one of: ${EVIDENCE_KINDS.join(', ')}.` }),
	method: z.preprocess(
		blank,
		z
			.enum(VERIFICATION_METHODS, { error: `Choose one of: ${VERIFICATION_METHODS.join(', ')}.` })
			.default('test')
	),
	testArticle: z.preprocess(blank, z.string().trim().max(500, 'At most 500 characters.').default('')),
	testDate: optional(isoDate),
	requirementIds: z
		.string({ error: 'Name at least one requirement this evidence verifies.' })
		.trim()
		.min(1, 'Name at least one requirement this evidence verifies.')
		.max(4000),
	note: z.preprocess(blank, z.string().trim().max(4000, 'At most 4000 characters.').default('')),
	...unitFields
});
export type UploadFields = z.infer<typeof uploadFields>;

/** A new revision: every field may be left out to keep the previous revision's value. */
export const revisionFields = z.object({
	title: optional(z.string().trim().min(1).max(200, 'At most 200 characters.')),
	kind: optional(z.enum(EVIDENCE_KINDS, { error: `Choose one of: ${EVIDENCE_KINDS.join(', ')}.` })),
	method: optional(
		z.enum(VERIFICATION_METHODS, { error: `Choose one of: ${VERIFICATION_METHODS.join(', ')}.` })
	),
	testArticle: optional(z.string().trim().max(500, 'At most 500 characters.')),
	testDate: optional(isoDate),
	requirementIds: optional(z.string().trim().min(1).max(4000)),
	note: z.preprocess(blank, z.string().trim().max(4000, 'At most 4000 characters.').default('')),
	...unitFields
});
export type RevisionFields = z.infer<typeof revisionFields>;

export const reviewForm = z.object({
	decision: z.enum(DECISIONS, { error: 'Choose accept or reject.' }),
	comment: z
		.string({ error: 'Say why: the comment is part of the record.' })
		.trim()
		.min(1, 'Say why: the comment is part of the record.')
		.max(4000, 'At most 4000 characters.'),
	revision: z.coerce.number({ error: 'Which revision?' }).int().positive('Which revision?'),
	// Re-entered at signing (identity/reauth.ts checks it before the review is attempted).
	password: z.string().optional()
});

export const toleranceForm = z.object({
	requirementId: z.coerce.number({ error: 'Which requirement?' }).int().positive('Which requirement?'),
	relativeErrorPct: z.coerce
		.number({ error: 'Give the relative error tolerance in %.' })
		.gt(0, 'Must be above 0 %.')
		.max(1000, 'At most 1000 %.'),
	phaseDeg: z.coerce
		.number({ error: 'Give the phase tolerance in degrees.' })
		.gt(0, 'Must be above 0°.')
		.max(180, 'At most 180°.')
});

export const listFilters = z.object({
	kind: optional(z.enum(EVIDENCE_KINDS)),
	review: optional(z.enum(['pending', 'accepted', 'rejected'])),
	requirement: optional(z.string().trim().max(100))
});
export type ListFilters = z.infer<typeof listFilters>;
