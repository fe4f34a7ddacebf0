import { z } from 'zod';
import { checkSchema } from '../../stability/index';
import { SPEC_TEMPLATES } from '../../requirements/templates';

import { ASSURANCE_LEVELS, LEVELS, METHODS, STATUSES } from '../../requirements/vocabulary';

export { ASSURANCE_LEVELS, LEVELS, METHODS, STATUSES };
export const WRITABLE_STATUSES = ['draft', 'retired'] as const;
export type Level = (typeof LEVELS)[number];
export type AssuranceLevel = (typeof ASSURANCE_LEVELS)[number];
export type Method = (typeof METHODS)[number];
export type Status = (typeof STATUSES)[number];

export const STATUS_LABELS: Record<Status, string> = {
	draft: 'draft',
	'in-review': 'in review',
	approved: 'approved',
	returned: 'returned for rework',
	retired: 'retired'
};

const id = (what: string) =>
	z.coerce
		.number({ error: `Choose ${what}.` })
		.int(`Choose ${what}.`)
		.positive(`Choose ${what}.`);

export const title = z
	.string({ error: 'Enter a title.' })
	.trim()
	.min(1, 'Enter a title.')
	.max(200, 'Use at most 200 characters.');
export const statement = z
	.string({ error: 'Enter the statement.' })
	.trim()
	.min(1, 'Enter the statement: what shall hold.')
	.max(4000, 'Use at most 4,000 characters.');
const rationale = z
	.string({ error: 'The rationale must be text.' })
	.trim()
	.max(4000, 'Use at most 4,000 characters.');
const level = z.enum(LEVELS, { error: 'Choose system, subsystem or loop.' });
const assuranceLevel = z.enum(ASSURANCE_LEVELS, { error: 'Choose an assurance level from A to E.' });
const methods = z
	.array(z.enum(METHODS, { error: 'Each method is one of analysis, test, inspection, demonstration.' }), {
		error: 'Choose at least one verification method.'
	})
	.min(1, 'Choose at least one verification method.')
	.transform((m) => [...new Set(m)].sort((a, b) => METHODS.indexOf(a) - METHODS.indexOf(b)));
const status = z.enum(WRITABLE_STATUSES, {
	error:
		'Choose draft or retired: review and approval go through the review workflow (request a review, then reviewers sign).'
});
const changeNote = z
	.string({ error: 'The change note must be text.' })
	.trim()
	.max(1000, 'Use at most 1,000 characters.');

export const requirementFields = z.object({
	title,
	statement,
	rationale: rationale.default(''),
	level,
	assuranceLevel,
	methods,
	ownerId: id('an owner').optional(),
	status: status.default('draft')
});
export type RequirementFields = z.infer<typeof requirementFields>;

export const createRequirement = requirementFields.extend({ changeNote: changeNote.default('') }).strict();
export type CreateRequirement = z.infer<typeof createRequirement>;

/** An edit: the revision it was made on, and any fields that change (the rest stay as they are). */
export const reviseRequirement = z
	.object({
		revision: z.coerce
			.number({ error: 'Send the revision you edited (revision).' })
			.int('The revision is a whole number.')
			.positive('The revision is a whole number from 1.'),
		title: title.optional(),
		statement: statement.optional(),
		rationale: rationale.optional(),
		level: level.optional(),
		assuranceLevel: assuranceLevel.optional(),
		methods: methods.optional(),
		ownerId: id('an owner').optional(),
		status: status.optional(),
		changeNote: changeNote.default('')
	})
	.strict();
export type ReviseRequirement = z.infer<typeof reviseRequirement>;

export const listFilters = z.object({
	status: z.enum(STATUSES, { error: 'Unknown status.' }).optional().catch(undefined),
	level: z.enum(LEVELS, { error: 'Unknown level.' }).optional().catch(undefined),
	owner: z.coerce.number().int().positive().optional().catch(undefined),
	q: z.string().trim().max(200).optional().catch(undefined)
});
export type ListFilters = z.infer<typeof listFilters>;

/** The same filters for the API, where a bad value is a 400 naming the parameter rather than ignored. */
export const listFiltersStrict = z
	.object({
		status: z
			.enum(STATUSES, { error: 'status is one of draft, in-review, approved, returned, retired.' })
			.optional(),
		level: z.enum(LEVELS, { error: 'level is one of system, subsystem, loop.' }).optional(),
		owner: z.coerce
			.number({ error: 'owner is a user id.' })
			.int('owner is a user id.')
			.positive('owner is a user id.')
			.optional(),
		q: z.string().trim().max(200, 'q has at most 200 characters.').optional()
	})
	.strict();

export const linkForm = z.object({
	parentId: id('the parent requirement')
});
export const unlinkForm = z.object({ linkId: id('the link') });

const TEMPLATE_IDS = SPEC_TEMPLATES.map((t) => t.id);

/** A stability specification. The check itself is validated by the engine's own schema. */
export const specificationInput = z
	.object({
		check: checkSchema.refine((c) => c.type !== 'max-sector', {
			message:
				'A specification states a required sector or margins; "max-sector" is a question, not a requirement.'
		}),
		requiredMargin: z
			.number({ error: 'The required margin is a fraction, e.g. 0.2 for 20 %.' })
			.min(0, 'The required margin is 0 or more.')
			.max(10, 'The required margin is at most 10 (1000 %).')
			.nullable()
			.default(null),
		operatingPoints: z
			.array(z.string().trim().min(1, 'An operating point label is empty.').max(200), {
				error: 'operatingPoints is a list of labels, or null for all.'
			})
			.min(1, 'List at least one operating point, or send null for all of them.')
			.nullable()
			.default(null),
		modelId: id('the model'),
		modelVersionId: id('the model version').nullable().default(null),
		template: z
			.string()
			.refine((t) => TEMPLATE_IDS.includes(t), { message: 'Unknown template.' })
			.nullable()
			.default(null),
		/** The version of the specification this edit was made on (optional; 409 when stale). */
		baseVersion: z.number().int().min(0).optional()
	})
	.strict()
	.superRefine((s, ctx) => {
		if (
			s.requiredMargin != null &&
			s.requiredMargin > 0 &&
			s.check.type !== 'circle' &&
			s.check.type !== 'popov'
		) {
			ctx.addIssue({
				code: 'custom',
				path: ['requiredMargin'],
				message: 'A required sector margin applies to circle and Popov checks only.'
			});
		}
	});
export type SpecificationInput = z.infer<typeof specificationInput>;

/**
 * The specification form: flat fields, turned into the same input as the API's.
 * Empty strings mean "not given".
 */
export const specificationForm = z
	.object({
		checkType: z.enum(['circle', 'popov', 'positive-real', 'margins'], { error: 'Choose the check.' }),
		k1: z.string().trim().default(''),
		k2: z.string().trim().default(''),
		minGainMarginDb: z.string().trim().default(''),
		minPhaseMarginDeg: z.string().trim().default(''),
		requiredMarginPercent: z.string().trim().default(''),
		operatingPoints: z.string().trim().default(''),
		modelId: z.string().trim().default(''),
		modelVersionId: z.string().trim().default(''),
		template: z.string().trim().default(''),
		baseVersion: z.string().trim().default('')
	})
	.transform((f, ctx) => {
		const num = (v: string, path: string, what: string): number | undefined => {
			if (v === '') return undefined;
			const n = Number(v.replace(',', '.').replace('−', '-'));
			if (!Number.isFinite(n)) {
				if (path === 'k2' && /^(?:∞|inf|infinity)$/i.test(v)) return Infinity;
				ctx.addIssue({ code: 'custom', path: [path], message: `${what} must be a number.` });
			}
			return n;
		};
		const need = (v: number | undefined, path: string, what: string) => {
			if (v === undefined) ctx.addIssue({ code: 'custom', path: [path], message: `Enter ${what}.` });
			return v ?? NaN;
		};
		let check: unknown;
		if (f.checkType === 'circle' || f.checkType === 'popov') {
			const k1 = need(num(f.k1, 'k1', 'k1'), 'k1', 'the lower sector bound k1');
			const k2 = need(num(f.k2, 'k2', 'k2'), 'k2', 'the upper sector bound k2');
			check = { type: f.checkType, sector: [k1, k2 === Infinity ? null : k2] };
		} else if (f.checkType === 'margins') {
			const gm = num(f.minGainMarginDb, 'minGainMarginDb', 'The gain margin');
			const pm = num(f.minPhaseMarginDeg, 'minPhaseMarginDeg', 'The phase margin');
			if (gm === undefined && pm === undefined) {
				ctx.addIssue({
					code: 'custom',
					path: ['minGainMarginDb'],
					message: 'Enter a gain margin, a phase margin or both.'
				});
			}
			check = {
				type: 'margins',
				...(gm !== undefined ? { minGainMarginDb: gm } : {}),
				...(pm !== undefined ? { minPhaseMarginDeg: pm } : {})
			};
		} else check = { type: 'positive-real' };
		const margin = num(f.requiredMarginPercent, 'requiredMarginPercent', 'The required margin');
		const points = f.operatingPoints
			.split(/\n|;/)
			.map((s) => s.trim())
			.filter(Boolean);
		const modelId = f.modelId === '' ? undefined : Number(f.modelId);
		if (modelId === undefined || !Number.isInteger(modelId) || modelId <= 0) {
			ctx.addIssue({
				code: 'custom',
				path: ['modelId'],
				message: 'Choose the model this specification applies to.'
			});
		}
		return {
			check: check as z.input<typeof specificationInput>['check'],
			requiredMargin: margin === undefined ? null : margin / 100,
			operatingPoints: points.length ? points : null,
			modelId: modelId ?? 0,
			modelVersionId:
				f.modelVersionId === '' || f.modelVersionId === 'latest' ? null : Number(f.modelVersionId),
			template: f.template === '' ? null : f.template,
			...(f.baseVersion !== '' ? { baseVersion: Number(f.baseVersion) } : {})
		};
	});

/** Parse the specification form: its own fields first, then the same schema as the API. */
export function parseSpecificationForm(
	values: Record<string, string>
): { success: true; data: SpecificationInput } | { success: false; errors: Record<string, string> } {
	const errors: Record<string, string> = {};
	const add = (e: z.ZodError) => {
		for (const issue of e.issues)
			errors[specFormErrorKey(issue.path.map(String).join('.'))] ??= issue.message;
	};
	const flat = specificationForm.safeParse(values);
	if (!flat.success) {
		add(flat.error);
		return { success: false, errors };
	}
	const full = specificationInput.safeParse(flat.data);
	if (!full.success) {
		add(full.error);
		return { success: false, errors };
	}
	return { success: true, data: full.data };
}

/** A requirement form's fields as an object (methods is a list of checkboxes; empty owner = not given). */
export function requirementFormValues(fd: FormData) {
	const s = (k: string) => {
		const v = fd.get(k);
		return typeof v === 'string' ? v : '';
	};
	return {
		title: s('title'),
		statement: s('statement'),
		rationale: s('rationale'),
		level: s('level'),
		assuranceLevel: s('assuranceLevel'),
		methods: fd.getAll('methods').filter((v): v is string => typeof v === 'string'),
		ownerId: s('ownerId'),
		status: s('status') || 'draft',
		changeNote: s('changeNote'),
		revision: s('revision')
	};
}
export type RequirementFormValues = ReturnType<typeof requirementFormValues>;

/** The form values as input for the schemas (drops what the form did not fill). */
export function formInput(v: RequirementFormValues, withRevision: boolean) {
	const { revision, ownerId, ...rest } = v;
	return {
		...rest,
		...(ownerId ? { ownerId } : {}),
		...(withRevision ? { revision } : {})
	};
}

/** Specification form error keys -> the form's field names. */
export function specFormErrorKey(key: string): string {
	if (key.startsWith('check.sector.0')) return 'k1';
	if (key.startsWith('check.sector')) return 'k2';
	if (key.startsWith('check.minGainMarginDb')) return 'minGainMarginDb';
	if (key.startsWith('check.minPhaseMarginDeg')) return 'minPhaseMarginDeg';
	if (key.startsWith('check')) return 'checkType';
	if (key.startsWith('requiredMargin')) return 'requiredMarginPercent';
	if (key.startsWith('operatingPoints')) return 'operatingPoints';
	return key;
}

/** Field errors keyed by the form's top-level field names ("methods.0" -> "methods"). */
export function formFieldErrors(error: z.ZodError): Record<string, string> {
	const out: Record<string, string> = {};
	for (const issue of error.issues) {
		const key = issue.path.length ? String(issue.path[0]) : '_';
		out[key] ??= issue.message;
	}
	return out;
}
