// Requirements in and out: the records an import reads from a file (ReqIF or a spreadsheet), the
// fields a file's attributes or columns map onto, and the spreadsheet mapping. Pure: no I/O; the
// server (src/lib/server/interchange) reads the files, compares the records with the project and
// applies them through the requirement service, which owns the rules.

/** The fields an attribute (ReqIF) or a column (spreadsheet) can map onto. */
export const IMPORT_FIELDS = [
	'identifier',
	'revision',
	'title',
	'statement',
	'rationale',
	'level',
	'assuranceLevel',
	'methods',
	'status',
	'criterion',
	'sectorLower',
	'sectorUpper',
	'minGainMarginDb',
	'minPhaseMarginDeg',
	'requiredMargin',
	'operatingPoints',
	'modelName',
	'modelVersion',
	'modelHash',
	'parentIdentifier'
] as const;
export type ImportField = (typeof IMPORT_FIELDS)[number];

/** The fields of a stability specification among them. */
export const SPEC_FIELDS: ImportField[] = [
	'criterion',
	'sectorLower',
	'sectorUpper',
	'minGainMarginDb',
	'minPhaseMarginDeg',
	'requiredMargin',
	'operatingPoints',
	'modelName',
	'modelVersion',
	'modelHash'
];

/** The attribute names Loopwarden writes (ReqIF LONG-NAME, spreadsheet header), one per field. */
export const FIELD_NAMES: Record<ImportField, string> = {
	identifier: 'Identifier',
	revision: 'Revision',
	title: 'Title',
	statement: 'Statement',
	rationale: 'Rationale',
	level: 'Level',
	assuranceLevel: 'Assurance level',
	methods: 'Verification methods',
	status: 'Status',
	criterion: 'Criterion',
	sectorLower: 'Sector lower bound',
	sectorUpper: 'Sector upper bound',
	minGainMarginDb: 'Minimum gain margin (dB)',
	minPhaseMarginDeg: 'Minimum phase margin (deg)',
	requiredMargin: 'Required sector margin',
	operatingPoints: 'Operating points',
	modelName: 'Model',
	modelVersion: 'Model version',
	modelHash: 'Model version SHA-256',
	parentIdentifier: 'Parent identifier'
};

// Other names a file may use for the same field, compared without case, spaces or punctuation. The
// "ReqIF.*" names are the attribute names of the ReqIF Implementation Guide (prostep ivip, from memory).
const SYNONYMS: Partial<Record<ImportField, string[]>> = {
	identifier: ['id', 'reqif.foreignid', 'foreign id', 'requirement id', 'key', 'number'],
	title: ['reqif.name', 'name', 'summary'],
	statement: ['reqif.text', 'text', 'description', 'requirement', 'requirement text'],
	rationale: ['justification', 'reason'],
	level: ['requirement level'],
	assuranceLevel: ['dal', 'asil', 'sil', 'assurance', 'development assurance level', 'integrity level'],
	methods: ['verification method', 'method', 'methods', 'verification'],
	status: ['state', 'reqif.status'],
	requiredMargin: ['margin', 'required margin', 'margin (%)'],
	sectorLower: ['lower bound', 'sector lower', 'k1'],
	sectorUpper: ['upper bound', 'sector upper', 'k2'],
	modelName: ['model name', 'plant model'],
	parentIdentifier: ['parent', 'derived from', 'parent id']
};

const squash = (s: string) => s.toLowerCase().replace(/[^\p{L}\p{N}]+/gu, '');

/** The field a file's attribute or column name maps onto by default, or null. */
export function guessField(name: string): ImportField | null {
	const n = squash(name);
	if (!n) return null;
	for (const f of IMPORT_FIELDS) {
		if (squash(FIELD_NAMES[f]) === n || squash(f) === n) return f;
	}
	for (const f of IMPORT_FIELDS) {
		if ((SYNONYMS[f] ?? []).some((s) => squash(s) === n)) return f;
	}
	return null;
}

/** Where a problem is: an object of a ReqIF file, or a row and column of a sheet. */
export interface ImportProblem {
	/** ReqIF SPEC-OBJECT (or SPEC-RELATION) identifier. */
	objectId?: string;
	/** The requirement identifier, when the record has one. */
	identifier?: string;
	row?: number;
	/** Column letter and header, e.g. "C (Statement)". */
	column?: string;
	field?: string;
	message: string;
}

export type RawValue = string | number | string[] | null;

/** One requirement as a file states it, before it is compared with the project. */
export interface ImportRecord {
	/** Stable key within the file: the SPEC-OBJECT identifier, or "row <n>" for a sheet. */
	key: string;
	objectId: string | null;
	row: number | null;
	/** Field values as found (strings, numbers, lists of enumeration names); absent = not stated. */
	values: Partial<Record<ImportField, RawValue>>;
	/** Parents by record key (ReqIF relations and hierarchy) or by identifier (a sheet's column). */
	parentKeys: string[];
	parentIdentifiers: string[];
	/** Where each field came from (attribute or column name), for problems. */
	sources: Partial<Record<ImportField, string>>;
	lastChange: string | null;
}

/** Values the user sets for fields the file does not state (new requirements only). */
export interface ImportDefaults {
	level?: string;
	assuranceLevel?: string;
	methods?: string[];
	modelName?: string;
}

/**
 * An import never approves. A file's status (approved, in review ...) is read and shown in the preview
 * as information, never applied: a new requirement is a draft, a changed one gets a new draft revision
 * (an approved revision stays in force until the new one is approved), and approval stays the signed
 * review done in Loopwarden. The one wording of that rule, for the preview, the import pages and the API.
 */
export const STATUS_NOT_APPLIED =
	'A status in the file is shown, not applied: imported requirements are drafts (a changed one gets a new draft revision), and approval is a signed review in Loopwarden.';

/** The preview's note for one requirement whose file states a status other than the one it will have. */
export function statusNote(fileStatus: string, willBe: string): string {
	return `The file says “${fileStatus}”; not applied: it will be ${willBe} here. Approval is a signed review in Loopwarden.`;
}

export function locate(r: ImportRecord): Pick<ImportProblem, 'objectId' | 'row' | 'identifier'> {
	const id = typeof r.values.identifier === 'string' ? r.values.identifier : undefined;
	return {
		...(r.objectId ? { objectId: r.objectId } : {}),
		...(r.row != null ? { row: r.row } : {}),
		...(id ? { identifier: id } : {})
	};
}

/** "row 12, column C (Statement)" / "object lw-req-VX7-001 (VX7-001)": where a problem is, in words. */
export function whereText(p: ImportProblem): string {
	const parts: string[] = [];
	if (p.row != null) parts.push(`row ${p.row}`);
	if (p.column) parts.push(`column ${p.column}`);
	if (p.objectId) parts.push(`object ${p.objectId}${p.identifier ? ` (${p.identifier})` : ''}`);
	else if (p.identifier) parts.push(p.identifier);
	return parts.join(', ');
}

// ---- enumerations ----

/** Match an enumeration name from a file to one of ours: case, spaces and dashes do not matter. */
export function matchEnum<T extends string>(value: string, allowed: readonly T[]): T | null {
	const n = squash(value);
	return allowed.find((a) => squash(a) === n) ?? null;
}

// ---- spreadsheets ----

export interface SheetMapping {
	/** The sheet's name (XLSX; a CSV has one). */
	sheet?: string;
	/** 1-based row of the column headers; data starts on the next row. */
	headerRow: number;
	/** Our field -> the column header it is read from. */
	columns: Partial<Record<ImportField, string>>;
	defaults: ImportDefaults;
}

/** A1-style column letter of a 0-based index. */
export function columnLetter(i: number): string {
	let s = '';
	let n = i + 1;
	while (n > 0) {
		const r = (n - 1) % 26;
		s = String.fromCharCode(65 + r) + s;
		n = Math.floor((n - 1) / 26);
	}
	return s;
}

/** The default column mapping of a sheet's header row (by name). */
export function guessColumns(headers: string[]): Partial<Record<ImportField, string>> {
	const out: Partial<Record<ImportField, string>> = {};
	for (const h of headers) {
		const f = guessField(h);
		if (f && f !== 'revision' && !out[f]) out[f] = h;
	}
	return out;
}

const listOf = (s: string) =>
	s
		.split(/[,;/|\n]+/)
		.map((x) => x.trim())
		.filter(Boolean);

/**
 * Parse a number the way people type it in a sheet: "0.5", "0,5", "−2", "1e-3"; "inf", "∞" for an
 * infinite upper bound. Null for an empty cell, NaN for text that is not a number.
 */
export function sheetNumber(s: string, allowInfinity = false): number | null {
	const t = s.trim();
	if (t === '') return null;
	if (allowInfinity && /^(?:\+?∞|\+?inf(?:inity)?)$/i.test(t)) return Infinity;
	const n = Number(t.replace('−', '-').replace(/^([-+]?\d+),(\d+)$/, '$1.$2'));
	return Number.isFinite(n) ? n : NaN;
}

/**
 * Rows of a sheet (cells as text) -> records, with a problem for each cell that cannot be read (row
 * and column named). The rules about the values themselves (lengths, allowed levels ...) are the
 * requirement service's, applied to the records afterwards.
 */
export function sheetRecords(
	rows: string[][],
	mapping: SheetMapping
): { records: ImportRecord[]; problems: ImportProblem[]; headers: string[] } {
	const headers = (rows[mapping.headerRow - 1] ?? []).map((h) => String(h ?? '').trim());
	const problems: ImportProblem[] = [];
	const col = new Map<ImportField, number>();
	for (const [field, header] of Object.entries(mapping.columns) as [ImportField, string][]) {
		if (!header) continue;
		const i = headers.indexOf(header);
		if (i < 0) {
			problems.push({
				field,
				message: `The column "${header}" mapped to ${FIELD_NAMES[field]} is not in the header row ${mapping.headerRow}.`
			});
			continue;
		}
		col.set(field, i);
	}
	const colName = (i: number) => `${columnLetter(i)} (${headers[i] || 'no header'})`;
	const records: ImportRecord[] = [];
	for (let r = mapping.headerRow; r < rows.length; r++) {
		const cells = rows[r] ?? [];
		if (cells.every((c) => String(c ?? '').trim() === '')) continue;
		const rowNo = r + 1;
		const rec: ImportRecord = {
			key: `row ${rowNo}`,
			objectId: null,
			row: rowNo,
			values: {},
			parentKeys: [],
			parentIdentifiers: [],
			sources: {},
			lastChange: null
		};
		for (const [field, i] of col) {
			const text = String(cells[i] ?? '').trim();
			rec.sources[field] = colName(i);
			if (text === '') continue;
			const bad = (what: string) =>
				problems.push({ row: rowNo, column: colName(i), field, message: `${FIELD_NAMES[field]}: ${what}` });
			switch (field) {
				case 'methods':
					rec.values.methods = listOf(text);
					break;
				case 'operatingPoints':
					rec.values.operatingPoints = listOf(text);
					break;
				case 'parentIdentifier':
					rec.parentIdentifiers = listOf(text);
					break;
				case 'sectorLower':
				case 'sectorUpper':
				case 'minGainMarginDb':
				case 'minPhaseMarginDeg':
				case 'modelVersion': {
					const n = sheetNumber(text, field === 'sectorUpper');
					if (n === null || Number.isNaN(n)) bad(`"${text}" is not a number.`);
					else rec.values[field] = n;
					break;
				}
				case 'requiredMargin': {
					// Percent in a sheet ("20" or "20 %"), a fraction in the requirement (0.2).
					const n = sheetNumber(text.replace(/\s*%$/, ''));
					if (n === null || Number.isNaN(n)) bad(`"${text}" is not a percentage.`);
					else rec.values.requiredMargin = n / 100;
					break;
				}
				default:
					rec.values[field] = text;
			}
		}
		if (typeof rec.values.identifier === 'string') rec.key = rec.values.identifier;
		records.push(rec);
	}
	const seen = new Map<string, number>();
	for (const rec of records) {
		const id = rec.values.identifier;
		if (typeof id !== 'string') continue;
		const first = seen.get(id);
		if (first != null) {
			problems.push({
				row: rec.row!,
				column: rec.sources.identifier,
				field: 'identifier',
				identifier: id,
				message: `The identifier ${id} is used again (first in row ${first}).`
			});
			rec.key = `row ${rec.row}`;
		} else seen.set(id, rec.row!);
	}
	return { records, problems, headers };
}
