import { z } from 'zod';
import { strictIn } from '../../stability/index';
import { modelInputSchema } from '../../models/entry/index';

// Loop models and their versions. A version's content is { operatingPoints: [{ label, model }] } with
// each model in one of the engine's forms (tf / zpk / ss), validated by the engine's own schema; a model
// sent as { kind: "expression", expression } is read into the equal tf first (models/entry), so it is
// stored and hashed as that tf. Unknown fields are refused everywhere (a misspelt or unsupported field
// would otherwise be dropped silently).

export const MODEL_FILE_FORMAT = 'loopwarden-model/1';
export const MAX_OPERATING_POINTS = 50;

export const modelName = z
	.string({ error: 'Enter a name.' })
	.trim()
	.min(1, 'Enter a name.')
	.max(100, 'Use at most 100 characters.');

export const createModelInput = z.object({
	name: modelName,
	description: z
		.string({ error: 'The description must be text.' })
		.trim()
		.max(4000, 'Use at most 4000 characters.')
		.default(''),
	/** Defaults to the creator. Must be an analyst of the project (or a site administrator). */
	ownerId: z.coerce
		.number({ error: 'Choose an owner.' })
		.int('Choose an owner.')
		.positive('Choose an owner.')
		.max(Number.MAX_SAFE_INTEGER, 'Choose an owner.')
		.optional()
});
export type CreateModelInput = z.infer<typeof createModelInput>;

export const operatingPoint = z.strictObject(
	{
		label: z
			.string({ error: 'Give each operating point a label, e.g. "hover, 20 C".' })
			.trim()
			.min(1, 'Give each operating point a label, e.g. "hover, 20 C".')
			.max(80, 'A label has at most 80 characters.'),
		model: modelInputSchema
	},
	strictIn('an operating point')
);
export type OperatingPoint = z.infer<typeof operatingPoint>;

const operatingPoints = z
	.array(operatingPoint, { error: 'operatingPoints must be a list of { label, model }.' })
	.min(1, 'Give at least one operating point.')
	.max(MAX_OPERATING_POINTS, `At most ${MAX_OPERATING_POINTS} operating points per version.`)
	.superRefine((pts, ctx) => {
		const seen = new Set<string>();
		pts.forEach((p, i) => {
			if (seen.has(p.label))
				ctx.addIssue({
					code: 'custom',
					path: [i, 'label'],
					message: `The label "${p.label}" is used twice.`
				});
			seen.add(p.label);
		});
	});

const note = z
	.string({ error: 'The change note must be text.' })
	.trim()
	.max(4000, 'Use at most 4000 characters.');

/** Body of POST /api/v1/projects/{key}/models/{id}/versions. */
export const publishInput = z.strictObject(
	{
		note: note.default(''),
		operatingPoints
	},
	strictIn('the version')
);
export type PublishInput = z.infer<typeof publishInput>;

/** Our upload format: a publish body tagged with its format name (see DEVELOPERS.md). */
export const modelFile = z.strictObject(
	{
		format: z.literal(MODEL_FILE_FORMAT, { error: `format must be "${MODEL_FILE_FORMAT}".` }),
		note: note.optional(),
		operatingPoints
	},
	strictIn('the model file')
);

/** The publish form: the operating points arrive as JSON text in one field. */
export const publishForm = z.object({
	note: note.default(''),
	operatingPoints: z
		.string({ error: 'Give the operating points.' })
		.min(1, 'Give at least one operating point.')
});
