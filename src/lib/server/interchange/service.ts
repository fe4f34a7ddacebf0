import { createHash } from 'node:crypto';
import { CAUTION_TEXT } from '../../caution';
import {
	FIELD_NAMES,
	SPEC_FIELDS,
	guessColumns,
	locate,
	matchEnum,
	sheetRecords,
	statusNote,
	type ImportField,
	type ImportProblem,
	type ImportRecord,
	type SheetMapping
} from '../../requirements/interchange';
import { wordDiff, type DiffPart } from '../../requirements/diff';
import {
	ReqifFormatError,
	objectIdFor,
	parseReqif,
	reqifChunks,
	reqifMappingFor,
	reqifRecords,
	type InterchangeDocument,
	type InterchangeRequirement,
	type InterchangeSpec,
	type ReqifMapping
} from '../../requirements/reqif';
import { canonical, lockChain, recordEvent, type Actor } from '../audit';
import { db, type Db } from '../db';
import { ServiceError } from '../errors';
import {
	addLink,
	createRequirement,
	pathUp,
	reviseRequirement,
	setSpecification,
	writtenStatus,
	type ProjectRef
} from '../requirements/service';
import {
	ASSURANCE_LEVELS,
	LEVELS,
	METHODS,
	STATUSES,
	STATUS_LABELS,
	requirementFields,
	specificationInput,
	type SpecificationInput,
	type Status
} from '../requirements/schema';
import type { Manifest } from '../baselines/service';
import * as repo from './repo';
import { readCsv, readXlsx, type Sheet } from './sheets';
import type { ImportFormat } from './schema';

// Requirements in and out of a project.
// Export: a project's current requirements, or a frozen baseline's (the revisions and links its
// manifest lists, with the immutable revision and specification rows they name), as ReqIF 1.2
// (src/lib/requirements/reqif.ts writes it).
// Import: a file is read into records (pure), compared with the project (new / changed / unchanged,
// problems by object or row and column) and stored as a preview; nothing changes until it is
// confirmed, and then everything happens in one transaction through the requirement service's acts,
// which keep their own rules (identifiers, revisions, cycles, specifications, audit, re-verification).

const sha256 = (b: Buffer | string) => createHash('sha256').update(b).digest('hex');
const iso = (d: Date | string) => new Date(d).toISOString();
const num = (v: unknown): number | null =>
	typeof v === 'number' ? v : v === 'Infinity' ? Infinity : v === '-Infinity' ? -Infinity : null;

// ---- export ----

function specOf(r: repo.ExportDbRow): InterchangeSpec | null {
	if (!r.spec_id || !r.check) return null;
	const c = r.check;
	const sector = Array.isArray(c.sector) ? (c.sector as unknown[]) : null;
	return {
		criterion: String(c.type),
		sectorLower: sector ? num(sector[0]) : null,
		sectorUpper: sector ? (sector[1] === null ? Infinity : num(sector[1])) : null,
		minGainMarginDb: num(c.minGainMarginDb),
		minPhaseMarginDeg: num(c.minPhaseMarginDeg),
		requiredMargin: r.required_margin,
		operatingPoints: r.operating_points,
		modelName: r.model_name ?? '',
		modelVersion: r.pinned_version,
		modelHash: r.model_hash
	};
}

/**
 * A requirement as written: the file it came from keeps its object id, revision count and time. The
 * status is the review state: the requirement's now, or (`state`) the one a baseline's manifest froze.
 */
function interchangeOf(
	r: repo.ExportDbRow,
	modelHash?: string | null,
	state?: string
): InterchangeRequirement {
	const src = r.object_id ? r : null;
	const spec = specOf(r);
	if (spec && modelHash !== undefined) spec.modelHash = modelHash;
	return {
		objectId: src?.object_id ?? objectIdFor(r.identifier),
		identifier: r.identifier,
		revision:
			src && src.source_revision != null
				? src.source_revision + (r.revision - src.local_revision!)
				: r.revision,
		lastChange:
			src && src.local_revision === r.revision && src.source_last_change
				? iso(src.source_last_change)
				: iso(r.revised_at),
		title: r.title,
		statement: r.statement,
		rationale: r.rationale,
		level: r.level,
		assuranceLevel: r.assurance_level,
		methods: [...r.methods],
		status: state ?? r.review_state,
		spec
	};
}

export interface ReqifExport {
	fileName: string;
	count: number;
	chunks: Iterable<string>;
}

/** The project's current requirements as ReqIF. */
export async function exportProject(project: ProjectRef & { name: string }): Promise<ReqifExport> {
	const { rows, links } = await db().transaction(
		async (trx) => ({
			rows: await repo.exportRows(trx, project.id),
			links: await repo.activeLinks(trx, project.id)
		}),
		{ isolationLevel: 'repeatable read', readOnly: true }
	);
	const reqs = rows.map((r) => interchangeOf(r));
	const objectOf = new Map(rows.map((r, i) => [Number(r.id), reqs[i].objectId]));
	const doc: InterchangeDocument = {
		title: project.name,
		comment: CAUTION_TEXT,
		requirements: reqs,
		links: links.map((l) => ({
			child: objectOf.get(Number(l.child_id))!,
			parent: objectOf.get(Number(l.parent_id))!
		}))
	};
	return {
		fileName: `${project.key}-requirements.reqif`,
		count: reqs.length,
		chunks: reqifChunks(doc, new Date().toISOString())
	};
}

/**
 * A baseline as frozen: the requirement revisions, specifications (by id; the rows are immutable),
 * model hashes and links its manifest lists. Refused when a revision's content hash differs from the
 * manifest's (the manifest would not be what is written).
 */
export async function exportBaseline(
	project: ProjectRef & { name: string },
	baseline: { number: number; label: string; manifest: Manifest }
): Promise<ReqifExport> {
	const m = baseline.manifest;
	const ids = m.requirements.map((r) => r.id);
	const rows = await repo.exportRows(db(), project.id, {
		ids,
		revisions: m.requirements.map((r) => r.revision),
		specIds: m.requirements.map((r) => r.spec?.id ?? null)
	});
	const byId = new Map(rows.map((r) => [Number(r.id), r]));
	const reqs: InterchangeRequirement[] = [];
	for (const fr of m.requirements) {
		const row = byId.get(fr.id);
		if (!row || row.content_hash !== fr.contentHash) {
			throw new ServiceError(
				409,
				`Baseline ${baseline.number}: the stored revision ${fr.revision} of ${fr.identifier} does not match the manifest's content hash; nothing was written.`
			);
		}
		reqs.push(interchangeOf(row, fr.model?.hash ?? null, fr.status));
	}
	const objectOf = new Map(reqs.map((r) => [r.identifier, r.objectId]));
	const doc: InterchangeDocument = {
		title: `${project.name}, baseline ${baseline.number}: ${baseline.label}`,
		comment: CAUTION_TEXT,
		requirements: reqs,
		links: m.links
			.filter((l) => objectOf.has(l.child) && objectOf.has(l.parent))
			.map((l) => ({ child: objectOf.get(l.child)!, parent: objectOf.get(l.parent)! }))
	};
	return {
		fileName: `${project.key}-baseline-${baseline.number}.reqif`,
		count: reqs.length,
		chunks: reqifChunks(doc, new Date().toISOString())
	};
}

/** Record an export in the audit trail (after the stream completed). */
export async function recordReqifExport(actor: Actor, projectId: number, rows: number, baselineId?: number) {
	await db().transaction((trx) =>
		recordEvent(trx, actor, {
			projectId,
			action: baselineId ? 'baseline.export' : 'trace.export',
			subjectType: baselineId ? 'baseline' : 'project',
			subjectId: baselineId ?? projectId,
			after: { format: 'reqif', rows }
		})
	);
}

// ---- import: reading the file ----

export interface UploadedFile {
	name: string;
	bytes: Buffer;
}

type AnyMapping = ReqifMapping | SheetMapping;

interface FileRead {
	records: ImportRecord[];
	problems: ImportProblem[];
	mapping: AnyMapping;
	/** What the preview page offers to map. */
	offer: MappingOffer;
}

export type MappingOffer =
	| {
			kind: 'reqif';
			types: { name: string; count: number; attributes: string[] }[];
			relationTypes: string[];
			skipped: number;
	  }
	| { kind: 'sheet'; sheets: string[]; sheet: string; headers: string[] };

function utf8(bytes: Buffer): string {
	const text = bytes.toString('utf8');
	return text.replace(/^\uFEFF/, '');
}

async function readFile(
	format: ImportFormat,
	file: UploadedFile,
	mapping: AnyMapping | null,
	remembered: unknown
): Promise<FileRead> {
	if (format === 'reqif') {
		let parsed;
		try {
			parsed = parseReqif(utf8(file.bytes));
		} catch (e) {
			if (e instanceof ReqifFormatError) {
				throw new ServiceError(
					e.kind === 'not-xml' ? 400 : 422,
					`${file.name || 'The file'}: ${e.message} (at ${e.where}). Nothing was stored.`,
					{ file: `${e.message} (at ${e.where})` },
					{ where: e.where }
				);
			}
			throw e;
		}
		const m = reqifMappingFor(parsed, (mapping ?? remembered) as Partial<ReqifMapping> | null);
		const { records, problems, skipped } = reqifRecords(parsed, m);
		const counts = new Map<string, number>();
		for (const o of parsed.objects) counts.set(o.type, (counts.get(o.type) ?? 0) + 1);
		return {
			records,
			problems,
			mapping: m,
			offer: {
				kind: 'reqif',
				types: parsed.objectTypes.map((t) => ({
					name: t.longName,
					count: counts.get(t.id) ?? 0,
					attributes: t.attributes.map((a) => a.longName)
				})),
				relationTypes: parsed.relationTypes.map((t) => t.longName),
				skipped
			}
		};
	}
	const sheets: Sheet[] = format === 'xlsx' ? await readXlsx(file.bytes) : readCsv(utf8(file.bytes));
	if (!sheets.length) throw new ServiceError(422, 'The workbook has no sheet.', { file: 'No sheet.' });
	const base = (mapping ?? remembered ?? null) as Partial<SheetMapping> | null;
	const sheet = sheets.find((s) => s.name === base?.sheet) ?? sheets[0];
	const headerRow = base?.headerRow ?? 1;
	const headers = (sheet.rows[headerRow - 1] ?? []).map((h) => String(h ?? '').trim());
	// A remembered mapping keeps the columns this sheet still has; the others are guessed by name.
	const guessed = guessColumns(headers);
	const columns = { ...guessed };
	for (const [f, h] of Object.entries(base?.columns ?? {}) as [ImportField, string][]) {
		if (mapping || headers.includes(h)) columns[f] = h;
		if (mapping && h === '') delete columns[f];
	}
	if (mapping)
		for (const f of Object.keys(columns) as ImportField[])
			if (!(f in (mapping as SheetMapping).columns)) delete columns[f];
	const m: SheetMapping = { sheet: sheet.name, headerRow, columns, defaults: { ...(base?.defaults ?? {}) } };
	const { records, problems } = sheetRecords(sheet.rows, m);
	return {
		records,
		problems,
		mapping: m,
		offer: { kind: 'sheet', sheets: sheets.map((s) => s.name), sheet: sheet.name, headers }
	};
}

// ---- import: comparing with the project ----

// The fields an import writes. The status is not among them: a file's status is information only
// (interchange.ts STATUS_NOT_APPLIED); the requirement service writes every revision as a draft.
type Fields = {
	title: string;
	statement: string;
	rationale: string;
	level: string;
	assuranceLevel: string;
	methods: string[];
};
const FIELD_KEYS: (keyof Fields)[] = [
	'title',
	'statement',
	'rationale',
	'level',
	'assuranceLevel',
	'methods'
];

export interface PlanItem {
	key: string;
	objectId: string | null;
	row: number | null;
	identifier: string;
	/** Set for an existing requirement. */
	requirementId: number | null;
	baseRevision: number | null;
	action: 'new' | 'changed' | 'unchanged';
	fields: Fields;
	changedFields: (keyof Fields)[];
	diff: Partial<Record<'title' | 'statement' | 'rationale', DiffPart[]>>;
	spec: SpecificationInput | null;
	specChanged: boolean;
	/** Parents to link, by plan key (in the file) or requirement id (already in the project). */
	newParents: { key?: string; requirementId?: number; identifier: string }[];
	sourceRevision: number | null;
	lastChange: string | null;
	/** The status the file states, as information (never applied), and the state it will have here. */
	fileStatus: string | null;
	willBe: string;
	/** Set when the file's status differs from willBe: the preview's note (interchange.ts statusNote). */
	statusNote: string | null;
}

export interface Preview {
	format: ImportFormat;
	fileName: string;
	counts: { new: number; changed: number; unchanged: number; problems: number; statusNotApplied: number };
	problems: ImportProblem[];
	items: PlanItem[];
	offer: MappingOffer;
}

const ENUMS: Partial<Record<ImportField, readonly string[]>> = {
	level: LEVELS,
	assuranceLevel: ASSURANCE_LEVELS,
	criterion: ['circle', 'popov', 'positive-real', 'margins']
};

async function plan(
	conn: Db,
	project: ProjectRef,
	read: FileRead,
	format: ImportFormat,
	fileName: string
): Promise<Preview> {
	const problems: ImportProblem[] = [...read.problems];
	const defaults = read.mapping.defaults ?? {};
	const current = await repo.exportRows(conn, project.id);
	const byReqId = new Map(current.map((r) => [Number(r.id), r]));
	const byIdentifier = new Map(current.map((r) => [r.identifier, r]));
	const bySource = new Map<string, number>();
	for (const s of await repo.importSourceIds(conn, project.id))
		bySource.set(s.object_id, Number(s.requirement_id));
	for (const r of current)
		if (!bySource.has(objectIdFor(r.identifier))) bySource.set(objectIdFor(r.identifier), Number(r.id));
	const models = await repo.modelsWithVersions(conn, project.id);

	const items: PlanItem[] = [];
	const claimed = new Set<number>();
	// A field already reported for a record (a cell that is not a number ...) is not reported again.
	const reported = new Set(
		read.problems.filter((p) => p.field).map((p) => `${p.row ?? p.objectId}|${p.field}`)
	);
	for (const rec of read.records) {
		const at = locate(rec);
		const where = (field?: ImportField) =>
			rec.row != null && field && rec.sources[field] ? { ...at, column: rec.sources[field] } : at;
		const problem = (message: string, field?: ImportField) => {
			const k = `${rec.row ?? rec.objectId}|${field}`;
			if (field && reported.has(k)) return;
			if (field) reported.add(k);
			problems.push({ ...where(field), ...(field ? { field } : {}), message });
		};
		const v = rec.values;
		const identifier = typeof v.identifier === 'string' ? v.identifier.trim() : '';
		const existingId =
			(rec.objectId ? bySource.get(rec.objectId) : undefined) ??
			(identifier ? (byIdentifier.get(identifier)?.id as number | undefined) : undefined);
		const existing = existingId != null ? byReqId.get(Number(existingId)) : undefined;
		if (existing && claimed.has(Number(existing.id))) {
			problem(`${existing.identifier} is stated twice in the file.`, 'identifier');
			continue;
		}
		if (existing) claimed.add(Number(existing.id));

		// Enumerations: a name the file gives must be one of ours (a value the file's DATATYPES do not
		// define was reported while reading).
		const enumValue = (f: ImportField): string | undefined => {
			const raw = v[f];
			if (raw == null) return undefined;
			const s = Array.isArray(raw) ? raw[0] : String(raw);
			if (s === undefined) return undefined;
			const m = matchEnum(String(s), ENUMS[f]!);
			if (!m) problem(`${FIELD_NAMES[f]}: "${s}" is not one of ${ENUMS[f]!.join(', ')}.`, f);
			return m ?? undefined;
		};
		let methods: string[] | undefined;
		if (v.methods != null) {
			const list = Array.isArray(v.methods) ? v.methods : [String(v.methods)];
			methods = [];
			for (const x of list) {
				const m = matchEnum(String(x), METHODS);
				if (!m) problem(`${FIELD_NAMES.methods}: "${x}" is not one of ${METHODS.join(', ')}.`, 'methods');
				else methods.push(m);
			}
		}
		const stated: Partial<Fields> = {};
		if (typeof v.title === 'string') stated.title = v.title;
		if (typeof v.statement === 'string') stated.statement = v.statement;
		if (typeof v.rationale === 'string') stated.rationale = v.rationale;
		const lv = enumValue('level');
		if (lv) stated.level = lv;
		const al = enumValue('assuranceLevel');
		if (al) stated.assuranceLevel = al;
		if (methods) stated.methods = methods;
		// Information only: an unknown status is shown as the file writes it, and is not a problem.
		const rawStatus = Array.isArray(v.status) ? v.status[0] : v.status;
		const fileStatus =
			rawStatus == null || String(rawStatus).trim() === ''
				? null
				: (matchEnum(String(rawStatus), STATUSES) ?? String(rawStatus).trim());

		const base: Partial<Fields> = existing
			? {
					title: existing.title,
					statement: existing.statement,
					rationale: existing.rationale,
					level: existing.level,
					assuranceLevel: existing.assurance_level,
					methods: [...existing.methods]
				}
			: {
					rationale: '',
					...(defaults.level ? { level: defaults.level } : {}),
					...(defaults.assuranceLevel ? { assuranceLevel: defaults.assuranceLevel } : {}),
					...(defaults.methods ? { methods: defaults.methods } : {})
				};
		const merged = { ...base, ...stated };
		// The same rules as the requirement form and API (requirements/schema.ts).
		const checked = requirementFields.omit({ ownerId: true, status: true }).safeParse(merged);
		if (!checked.success) {
			for (const i of checked.error.issues) {
				const f = String(i.path[0] ?? '') as ImportField;
				const missing = merged[f as keyof Fields] === undefined;
				problem(
					missing
						? `${FIELD_NAMES[f] ?? f} is missing: the file does not give it${rec.sources[f] ? '' : ' (no attribute or column is mapped to it)'} and no default is set.`
						: `${FIELD_NAMES[f] ?? f}: ${i.message}`,
					f
				);
			}
			continue;
		}
		const fields = checked.data as Fields;

		// The stability specification, when the file states any part of it.
		let spec: SpecificationInput | null = null;
		const statesSpec =
			SPEC_FIELDS.some((f) => v[f] != null) || (!existing && defaults.modelName && v.sectorLower != null);
		if (statesSpec) spec = specFrom(rec, defaults.modelName, models, problem, enumValue);

		const changedFields = existing
			? FIELD_KEYS.filter((k) => canonical(fields[k]) !== canonical(base[k]))
			: [];
		const diff: PlanItem['diff'] = {};
		if (existing) {
			for (const k of ['title', 'statement', 'rationale'] as const) {
				if (changedFields.includes(k)) diff[k] = wordDiff(String(base[k] ?? ''), fields[k]);
			}
		}
		const specChanged = !!spec && (!existing || !sameSpec(existing, spec));
		// The state it will have here: the requirement service's rule for a written revision (a new
		// revision is a draft, a retired one stays retired); otherwise its review state stays.
		const willBe = !existing
			? writtenStatus('draft')
			: changedFields.length
				? writtenStatus(existing.review_state)
				: existing.review_state;
		items.push({
			key: rec.key,
			objectId: rec.objectId,
			row: rec.row,
			identifier: existing?.identifier ?? identifier,
			requirementId: existing ? Number(existing.id) : null,
			baseRevision: existing ? existing.revision : null,
			action: existing ? 'unchanged' : 'new',
			fields,
			changedFields,
			diff,
			spec,
			specChanged,
			newParents: [],
			sourceRevision: typeof v.revision === 'number' ? v.revision : null,
			lastChange: rec.lastChange,
			fileStatus,
			willBe,
			statusNote:
				fileStatus && fileStatus !== willBe
					? statusNote(fileStatus, STATUS_LABELS[willBe as Status] ?? willBe)
					: null
		});
	}

	// Links: parents named by the file, resolved to the file's own items or the project's requirements.
	const byKey = new Map(items.map((i) => [i.key, i]));
	const byIdent = new Map(items.filter((i) => i.identifier).map((i) => [i.identifier, i]));
	const edges = (await repo.activeLinks(conn, project.id)).map((e) => ({
		child_id: Number(e.child_id),
		parent_id: Number(e.parent_id)
	}));
	const has = new Set(edges.map((e) => `${e.child_id}>${e.parent_id}`));
	// New items get temporary negative ids for the cycle test.
	const tmp = new Map<PlanItem, number>();
	items.forEach((it, i) => tmp.set(it, it.requirementId ?? -(i + 1)));
	const nameOf = (id: number) =>
		id < 0 ? items[-id - 1].identifier || items[-id - 1].key : (byReqId.get(id)?.identifier ?? `#${id}`);
	for (const rec of read.records) {
		const it = byKey.get(rec.key);
		if (!it) continue;
		const parents: { item?: PlanItem; id?: number; name: string }[] = [];
		for (const k of rec.parentKeys) {
			const p = byKey.get(k);
			if (p) parents.push({ item: p, name: p.identifier || k });
		}
		for (const ident of rec.parentIdentifiers) {
			const p = byIdent.get(ident);
			const ex = byIdentifier.get(ident);
			if (p) parents.push({ item: p, name: ident });
			else if (ex) parents.push({ id: Number(ex.id), name: ident });
			else
				problems.push({
					...locate(rec),
					...(rec.sources.parentIdentifier ? { column: rec.sources.parentIdentifier } : {}),
					field: 'parentIdentifier',
					message: `The parent ${ident} is neither in the file nor in the project.`
				});
		}
		for (const p of parents) {
			const c = tmp.get(it)!;
			const pid = p.item ? tmp.get(p.item)! : p.id!;
			if (c === pid) {
				problems.push({
					...locate(rec),
					message: `${it.identifier || it.key} cannot be derived from itself.`
				});
				continue;
			}
			if (has.has(`${c}>${pid}`)) continue;
			// The requirement service's own cycle rule (pathUp), on the project's links plus the file's.
			const path = pathUp(edges, pid, c);
			if (path) {
				problems.push({
					...locate(rec),
					message: `Derived-from cycle: ${[c, ...path].map(nameOf).join(' → ')}.`
				});
				continue;
			}
			edges.push({ child_id: c, parent_id: pid });
			has.add(`${c}>${pid}`);
			it.newParents.push(
				p.item ? { key: p.item.key, identifier: p.name } : { requirementId: pid, identifier: p.name }
			);
		}
	}
	for (const it of items) {
		if (it.action === 'new') continue;
		if (it.changedFields.length || it.specChanged || it.newParents.length) it.action = 'changed';
	}
	const counts = {
		new: items.filter((i) => i.action === 'new').length,
		changed: items.filter((i) => i.action === 'changed').length,
		unchanged: items.filter((i) => i.action === 'unchanged').length,
		problems: problems.length,
		statusNotApplied: items.filter((i) => i.statusNote).length
	};
	return { format, fileName, counts, problems, items, offer: read.offer };
}

function specFrom(
	rec: ImportRecord,
	defaultModel: string | undefined,
	models: Awaited<ReturnType<typeof repo.modelsWithVersions>>,
	problem: (message: string, field?: ImportField) => void,
	enumValue: (f: ImportField) => string | undefined
): SpecificationInput | null {
	const v = rec.values;
	const criterion = v.criterion != null ? enumValue('criterion') : 'circle';
	if (!criterion) return null;
	const modelName = typeof v.modelName === 'string' ? v.modelName : defaultModel;
	if (!modelName) {
		problem(`${FIELD_NAMES.modelName} is missing: a stability specification names its model.`, 'modelName');
		return null;
	}
	const versions = models.filter((m) => m.name === modelName);
	if (!versions.length) {
		problem(`${FIELD_NAMES.modelName}: this project has no model "${modelName}".`, 'modelName');
		return null;
	}
	const model = versions[0];
	let versionId: number | null = null;
	let inForce = versions.find((m) => m.version === model.latest_version);
	if (typeof v.modelVersion === 'number') {
		const pinned = versions.find((m) => m.version === v.modelVersion);
		if (!pinned) {
			problem(`${FIELD_NAMES.modelVersion}: ${modelName} has no version ${v.modelVersion}.`, 'modelVersion');
			return null;
		}
		versionId = Number(pinned.version_id);
		inForce = pinned;
	}
	if (typeof v.modelHash === 'string' && v.modelHash && inForce?.content_hash !== v.modelHash) {
		const other = versions.find((m) => m.content_hash === v.modelHash);
		problem(
			`${FIELD_NAMES.modelHash}: the file's hash ${v.modelHash.slice(0, 12)}… is ${other ? `that of version ${other.version}` : 'not that of any version'} of ${modelName}, not of the version the specification would use (${inForce ? `version ${inForce.version}` : 'none yet'}).`,
			'modelHash'
		);
		return null;
	}
	const lower = typeof v.sectorLower === 'number' ? v.sectorLower : undefined;
	const upper = typeof v.sectorUpper === 'number' ? v.sectorUpper : undefined;
	let check: Record<string, unknown>;
	if (criterion === 'circle' || criterion === 'popov') {
		if (lower === undefined)
			problem(`${FIELD_NAMES.sectorLower} is missing for the ${criterion} criterion.`, 'sectorLower');
		if (upper === undefined)
			problem(`${FIELD_NAMES.sectorUpper} is missing for the ${criterion} criterion.`, 'sectorUpper');
		if (lower === undefined || upper === undefined) return null;
		check = { type: criterion, sector: [lower, upper === Infinity ? null : upper] };
	} else if (criterion === 'margins') {
		check = {
			type: 'margins',
			...(typeof v.minGainMarginDb === 'number' ? { minGainMarginDb: v.minGainMarginDb } : {}),
			...(typeof v.minPhaseMarginDeg === 'number' ? { minPhaseMarginDeg: v.minPhaseMarginDeg } : {})
		};
	} else check = { type: 'positive-real' };
	const input = {
		check,
		requiredMargin: typeof v.requiredMargin === 'number' ? v.requiredMargin : null,
		operatingPoints: Array.isArray(v.operatingPoints) && v.operatingPoints.length ? v.operatingPoints : null,
		modelId: Number(model.model_id),
		modelVersionId: versionId
	};
	// The same schema as the specification form and API (the engine's check schema inside).
	const r = specificationInput.safeParse(input);
	if (!r.success) {
		for (const i of r.error.issues) {
			const path = i.path.map(String).join('.');
			const f: ImportField = path.startsWith('check.sector.0')
				? 'sectorLower'
				: path.startsWith('check.sector')
					? 'sectorUpper'
					: path.startsWith('requiredMargin')
						? 'requiredMargin'
						: path.startsWith('operatingPoints')
							? 'operatingPoints'
							: 'criterion';
			problem(`${FIELD_NAMES[f]}: ${i.message}`, f);
		}
		return null;
	}
	const labels = (inForce?.points ?? []).map((p) => p.label);
	const unknown = (r.data.operatingPoints ?? []).filter((p) => !labels.includes(p));
	if (unknown.length && inForce) {
		problem(
			`${FIELD_NAMES.operatingPoints}: version ${inForce.version} of ${modelName} has no operating point ${unknown.join(', ')}.`,
			'operatingPoints'
		);
		return null;
	}
	return r.data;
}

/** The specification content the requirement service hashes, compared with the current one. */
function sameSpec(r: repo.ExportDbRow, s: SpecificationInput): boolean {
	if (!r.spec_id) return false;
	const cur = {
		check: r.check,
		requiredMargin: r.required_margin,
		operatingPoints: r.operating_points,
		modelId: Number(r.model_id),
		modelVersionId: r.model_version_id == null ? null : Number(r.model_version_id)
	};
	const next = {
		check: JSON.parse(JSON.stringify(s.check)),
		requiredMargin: s.requiredMargin,
		operatingPoints: s.operatingPoints,
		modelId: s.modelId,
		modelVersionId: s.modelVersionId
	};
	return canonical(cur) === canonical(next);
}

// ---- import: the preview ----

export interface ImportView {
	id: number;
	status: string;
	format: ImportFormat;
	fileName: string;
	counts: Preview['counts'];
	problems: ImportProblem[];
	items: PlanItem[];
	offer: MappingOffer;
	mapping: AnyMapping;
	progress: { done: number; total: number } | null;
	result: unknown;
	createdAt: string;
}

function view(row: repo.ImportRow): ImportView {
	const p = row.preview as Preview;
	return {
		id: Number(row.id),
		status: row.status,
		format: row.format as ImportFormat,
		fileName: row.file_name,
		counts: p.counts,
		problems: p.problems,
		items: p.items,
		offer: p.offer,
		mapping: row.mapping as AnyMapping,
		progress: row.progress,
		result: row.result,
		createdAt: iso(row.created_at)
	};
}

/** Read a file, compare it with the project and store the preview. Nothing else changes. */
export async function previewImport(
	actor: Actor,
	project: ProjectRef,
	format: ImportFormat,
	file: UploadedFile,
	mapping: AnyMapping | null
): Promise<ImportView> {
	const remembered = await repo.mappings.get(db(), project.id, format);
	const read = await readFile(format, file, mapping, remembered);
	const state = await repo.projectState(db(), project.id);
	const preview = await plan(db(), project, read, format, file.name);
	const row = await repo.imports.insert(db(), {
		project_id: project.id,
		format,
		file_name: file.name,
		file_sha256: sha256(file.bytes),
		size_bytes: file.bytes.length,
		mapping: read.mapping,
		preview,
		project_state: state,
		created_by: actor.userId ?? null,
		content: file.bytes
	});
	return view(row);
}

export async function getImport(id: number): Promise<ImportView> {
	const row = await repo.imports.byId(db(), id);
	if (!row) throw new ServiceError(404, `There is no import ${id}.`);
	return view(row);
}

export const listImports = (projectId: number) => repo.imports.list(db(), projectId);

/** Compute the preview again with another mapping (the same file). */
export async function remapImport(project: ProjectRef, id: number, mapping: AnyMapping): Promise<ImportView> {
	const row = await repo.imports.byId(db(), id);
	if (!row || Number(row.project_id) !== project.id) throw new ServiceError(404, `There is no import ${id}.`);
	if (row.status !== 'preview')
		throw new ServiceError(409, `Import ${id} is ${row.status}; its mapping cannot change.`);
	const bytes = (await repo.imports.content(db(), id))!;
	const format = row.format as ImportFormat;
	const read = await readFile(format, { name: row.file_name, bytes }, mapping, null);
	const state = await repo.projectState(db(), project.id);
	const preview = await plan(db(), project, read, format, row.file_name);
	await repo.imports.setPreview(db(), id, read.mapping, preview, state);
	return getImport(id);
}

// ---- import: confirming ----

export interface ImportResult {
	created: string[];
	revised: string[];
	unchanged: number;
	specifications: number;
	links: number;
}

/** Above this many requirements the page runs the confirm in the background and shows its progress. */
export const LARGE_IMPORT = 300;

/**
 * Apply a preview in one transaction: refused with 422 while it has problems and 409 when the project
 * changed since it was computed (or the import was confirmed already). Each requirement goes through
 * the requirement service's acts, which write their audit events and queue their analyses; one
 * `import.confirm` event records the file.
 */
export async function confirmImport(actor: Actor, project: ProjectRef, id: number): Promise<ImportResult> {
	const row = await repo.imports.byId(db(), id);
	if (!row || Number(row.project_id) !== project.id) throw new ServiceError(404, `There is no import ${id}.`);
	if (row.status === 'confirmed')
		throw new ServiceError(409, `Import ${id} was confirmed already; nothing was changed.`);
	if (row.status === 'running') throw new ServiceError(409, `Import ${id} is being confirmed right now.`);
	const p = row.preview as Preview;
	if (p.problems.length) {
		throw new ServiceError(
			422,
			`Import ${id} still has ${p.problems.length} problem${p.problems.length === 1 ? '' : 's'}; nothing was changed. Fix the file or the mapping first.`,
			{},
			{ problems: p.problems }
		);
	}
	const work = p.items.filter((i) => i.action !== 'unchanged');
	if (!(await repo.imports.claim(db(), id, work.length))) {
		throw new ServiceError(409, `Import ${id} is being confirmed or was confirmed already.`);
	}
	try {
		const result = await db().transaction(async (trx) => {
			// The audit chain first, then the project (audit.ts lockChain): a worker finishing a run holds
			// the chain while it writes events that reference the project row.
			await lockChain(trx);
			await trx('projects').where({ id: project.id }).forUpdate().first('id');
			if ((await repo.projectState(trx, project.id)) !== row.project_state) {
				throw new ServiceError(
					409,
					`The project changed since import ${id} was previewed; nothing was changed. Preview the file again.`
				);
			}
			return apply(trx, actor, project, row, p, work);
		});
		await repo.imports.finish(db(), id, result);
		return result;
	} catch (e) {
		await repo.imports.release(db(), id);
		throw e;
	}
}

async function apply(
	trx: Db,
	actor: Actor,
	project: ProjectRef,
	row: repo.ImportRow,
	p: Preview,
	work: PlanItem[]
): Promise<ImportResult> {
	const note = `Imported from ${row.file_name || 'a file'} (import ${row.id})`;
	const ids = new Map<string, number>();
	const result: ImportResult = {
		created: [],
		revised: [],
		unchanged: p.items.length - work.length,
		specifications: 0,
		links: 0
	};
	let done = 0;
	const tick = async () => {
		done++;
		if (done % 200 === 0) await repo.imports.progress(db(), Number(row.id), done, work.length * 2);
	};
	const source = async (requirementId: number, revision: number, it: PlanItem) => {
		if (p.format !== 'reqif' || !it.objectId) return;
		await repo.insertImportSource(trx, {
			requirement_id: requirementId,
			local_revision: revision,
			object_id: it.objectId,
			source_revision: it.sourceRevision,
			source_last_change: it.lastChange,
			import_id: Number(row.id)
		});
	};
	for (const it of p.items) if (it.requirementId) ids.set(it.key, it.requirementId);
	for (const it of work) {
		if (it.action === 'new') {
			const made = await createRequirement(
				actor,
				project,
				// The fields passed requirements/schema.ts in the preview; a new requirement is a draft.
				{ ...it.fields, status: 'draft', changeNote: note } as Parameters<typeof createRequirement>[2],
				{
					conn: trx,
					...(it.identifier ? { identifier: it.identifier } : {})
				}
			);
			ids.set(it.key, made.id);
			result.created.push(made.identifier);
			await source(made.id, 1, it);
		} else if (it.changedFields.length) {
			const changes: Record<string, unknown> = {};
			for (const k of it.changedFields) changes[k] = it.fields[k];
			const r = await reviseRequirement(
				actor,
				it.requirementId!,
				{ revision: it.baseRevision!, changeNote: note, ...changes } as never,
				{ conn: trx }
			);
			if (!r.unchanged) {
				result.revised.push(r.identifier);
				await source(it.requirementId!, r.revision, it);
			}
		}
		await tick();
	}
	for (const it of work) {
		if (it.spec && it.specChanged) {
			const s = await setSpecification(actor, ids.get(it.key)!, it.spec, { conn: trx });
			if (!s.unchanged) result.specifications++;
		}
	}
	// One read of the project's links; addLink decides each one on them (and appends what it adds).
	const edges = (await repo.activeLinks(trx, project.id)).map((e) => ({
		child_id: Number(e.child_id),
		parent_id: Number(e.parent_id)
	}));
	for (const it of work) {
		for (const par of it.newParents) {
			const parentId = par.requirementId ?? ids.get(par.key!)!;
			await addLink(actor, ids.get(it.key)!, parentId, { conn: trx, edges });
			result.links++;
		}
		await tick();
	}
	await recordEvent(trx, actor, {
		projectId: project.id,
		action: 'import.confirm',
		subjectType: 'project',
		subjectId: project.id,
		after: {
			import: Number(row.id),
			format: row.format,
			file: row.file_name,
			sha256: row.file_sha256,
			created: result.created.length,
			revised: result.revised.length,
			unchanged: result.unchanged,
			specifications: result.specifications,
			links: result.links
		}
	});
	if (p.format === 'reqif' || p.format === 'xlsx' || p.format === 'csv') {
		await repo.mappings.put(trx, project.id, p.format, row.mapping);
	}
	return result;
}
