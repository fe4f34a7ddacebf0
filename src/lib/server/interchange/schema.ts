import { z } from 'zod';
import { IMPORT_FIELDS } from '../../requirements/interchange';
import { ASSURANCE_LEVELS, LEVELS, METHODS } from '../requirements/schema';

// What an import request may carry: the format and, optionally, a mapping (JSON). Unknown fields are
// refused, never ignored.

export const IMPORT_FORMATS = ['reqif', 'xlsx', 'csv'] as const;
export type ImportFormat = (typeof IMPORT_FORMATS)[number];

export const importFormat = z.enum(IMPORT_FORMATS, { error: 'format is one of reqif, xlsx, csv.' });

const field = z.union([
	z.enum(IMPORT_FIELDS, { error: `A field is one of ${IMPORT_FIELDS.join(', ')}.` }),
	z.literal('')
]);

const defaults = z
	.object({
		level: z.enum(LEVELS, { error: 'defaults.level is one of system, subsystem, loop.' }).optional(),
		assuranceLevel: z.enum(ASSURANCE_LEVELS, { error: 'defaults.assuranceLevel is one of A-E.' }).optional(),
		methods: z
			.array(z.enum(METHODS, { error: 'defaults.methods lists analysis, test, inspection, demonstration.' }))
			.optional(),
		modelName: z.string().trim().min(1).max(200).optional()
	})
	.strict()
	.default({});

export const reqifMapping = z
	.object({
		types: z
			.record(
				z.string(),
				z.object({ import: z.boolean(), attributes: z.record(z.string(), field).default({}) }).strict()
			)
			.default({}),
		relationTypes: z.record(z.string(), z.boolean()).default({}),
		hierarchyLinks: z.boolean().default(true),
		defaults
	})
	.strict();

export const sheetMapping = z
	.object({
		sheet: z.string().optional(),
		headerRow: z.number().int().min(1, 'headerRow counts from 1.').max(1000).default(1),
		columns: z.partialRecord(z.enum(IMPORT_FIELDS), z.string()).default({}),
		defaults
	})
	.strict();

/** The mapping of a request: JSON text, checked against the format's schema. */
export function parseMapping(format: ImportFormat, text: string | undefined) {
	if (text === undefined || text.trim() === '') return null;
	let raw: unknown;
	try {
		raw = JSON.parse(text);
	} catch (e) {
		return { error: `mapping is not JSON: ${(e as Error).message}` } as const;
	}
	const schema = format === 'reqif' ? reqifMapping : sheetMapping;
	const r = schema.safeParse(raw);
	if (!r.success) {
		const i = r.error.issues[0];
		return { error: `mapping.${i.path.map(String).join('.')}: ${i.message}` } as const;
	}
	return { mapping: r.data } as const;
}

/** The format of an upload: as given, else from the file's extension. */
export function formatOf(given: string | undefined, fileName: string): ImportFormat | null {
	if (given) return (IMPORT_FORMATS as readonly string[]).includes(given) ? (given as ImportFormat) : null;
	const ext = /\.([a-z]+)$/i.exec(fileName)?.[1]?.toLowerCase();
	if (ext === 'reqif' || ext === 'xml') return 'reqif';
	if (ext === 'xlsx') return 'xlsx';
	if (ext === 'csv' || ext === 'txt') return 'csv';
	return null;
}

/**
 * The preview page's mapping form -> a mapping, then the same schema as the API's. Fields are named by
 * position in what the file offers (type.0.import, type.0.attr.3, rel.1, col.title, def.level ...).
 */
export function mappingFromForm(
	format: ImportFormat,
	fd: FormData,
	offer:
		| { kind: 'reqif'; types: { name: string; attributes: string[] }[]; relationTypes: string[] }
		| { kind: 'sheet'; headers: string[] }
) {
	const s = (k: string) => {
		const v = fd.get(k);
		return typeof v === 'string' ? v : '';
	};
	const defaults: Record<string, unknown> = {};
	for (const k of ['level', 'assuranceLevel', 'modelName']) if (s(`def.${k}`)) defaults[k] = s(`def.${k}`);
	const methods = fd.getAll('def.methods').filter((v): v is string => typeof v === 'string' && v !== '');
	if (methods.length) defaults.methods = methods;
	let raw: unknown;
	if (format === 'reqif' && offer.kind === 'reqif') {
		raw = {
			types: Object.fromEntries(
				offer.types.map((t, i) => [
					t.name,
					{
						import: s(`type.${i}.import`) === 'on',
						attributes: Object.fromEntries(t.attributes.map((a, j) => [a, s(`type.${i}.attr.${j}`)]))
					}
				])
			),
			relationTypes: Object.fromEntries(offer.relationTypes.map((r, i) => [r, s(`rel.${i}`) === 'on'])),
			hierarchyLinks: s('hierarchy') === 'on',
			defaults
		};
	} else {
		const columns: Record<string, string> = {};
		for (const f of IMPORT_FIELDS) if (fd.has(`col.${f}`)) columns[f] = s(`col.${f}`);
		raw = {
			...(s('sheet') ? { sheet: s('sheet') } : {}),
			headerRow: Number(s('headerRow') || '1'),
			columns,
			defaults
		};
	}
	return parseMapping(format, JSON.stringify(raw));
}
