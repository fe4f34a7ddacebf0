import { XMLParser, XMLValidator } from 'fast-xml-parser';
import {
	FIELD_NAMES,
	IMPORT_FIELDS,
	guessField,
	type ImportDefaults,
	type ImportField,
	type ImportProblem,
	type ImportRecord,
	type RawValue
} from './interchange';

// ReqIF 1.2 (OMG Requirements Interchange Format, formal/2016-07-01) written and read. Pure: strings in,
// strings and plain data out. Section numbers below are those of the OMG ReqIF 1.2 specification
// (from memory where marked).
//
// Written: REQ-IF with THE-HEADER and CORE-CONTENT / REQ-IF-CONTENT holding, in the schema's order,
// DATATYPES, SPEC-TYPES, SPEC-OBJECTS, SPEC-RELATIONS, SPECIFICATIONS (§10.3 "ReqIF content", from
// memory). Identifiers are derived from what they identify (the requirement's identifier, the pair of a
// relation, fixed names for the types), and every LAST-CHANGE from stored times, so the same content
// always gives the same bytes; only the header's CREATION-TIME says when the file was written.

export const REQIF_NS = 'http://www.omg.org/spec/ReqIF/20110401/reqif.xsd';
export const XHTML_NS = 'http://www.w3.org/1999/xhtml';
/** When Loopwarden's attribute mapping was defined: the LAST-CHANGE of its datatypes and types. */
export const MAPPING_DATE = '2026-12-02T00:00:00.000Z';

// The enumerations are the requirement vocabularies themselves (vocabulary.ts).
import { ASSURANCE_LEVELS, LEVELS, METHODS, STATUSES } from './vocabulary';
export const LEVEL_VALUES = LEVELS;
export const ASSURANCE_VALUES = ASSURANCE_LEVELS;
export const METHOD_VALUES = METHODS;
export const STATUS_VALUES = STATUSES;
export const CRITERION_VALUES = ['circle', 'popov', 'positive-real', 'margins'] as const;

export interface InterchangeSpec {
	criterion: string;
	sectorLower: number | null;
	/** Infinity for an unbounded sector. */
	sectorUpper: number | null;
	minGainMarginDb: number | null;
	minPhaseMarginDeg: number | null;
	/** A fraction: 0.2 is 20 %. */
	requiredMargin: number | null;
	operatingPoints: string[] | null;
	modelName: string;
	/** Null: the model's latest version. */
	modelVersion: number | null;
	/** SHA-256 of the model version in force when written. */
	modelHash: string | null;
}

export interface InterchangeRequirement {
	/** The SPEC-OBJECT identifier (an xsd:ID). */
	objectId: string;
	identifier: string;
	revision: number;
	lastChange: string;
	title: string;
	statement: string;
	rationale: string;
	level: string;
	assuranceLevel: string;
	methods: string[];
	status: string;
	spec: InterchangeSpec | null;
}

export interface InterchangeDocument {
	title: string;
	comment: string;
	/** Sorted as they are to be written. */
	requirements: InterchangeRequirement[];
	/** Derived-from links by object id: child is derived from parent. */
	links: { child: string; parent: string }[];
}

/** An xsd:ID (NCName) for a requirement identifier: letters, digits, '-', '_', '.'; never a leading digit. */
export function objectIdFor(identifier: string): string {
	const safe = identifier.replace(/[^A-Za-z0-9._-]/g, (c) => `_${c.codePointAt(0)!.toString(16)}_`);
	return `lw-req-${safe}`;
}

// ---- writing ----

const escText = (s: string) =>
	s
		.replace(/&/g, '&amp;')
		.replace(/</g, '&lt;')
		.replace(/>/g, '&gt;')
		.replace(/\r/g, '&#13;')
		.replace(/\t/g, '&#9;');
// Attribute values: line ends and tabs as character references, or XML's attribute-value normalisation
// (XML 1.0 §3.3.3) would turn them into spaces.
const escAttr = (s: string) => escText(s).replace(/"/g, '&quot;').replace(/\n/g, '&#10;');

const xsdDouble = (n: number) => (n === Infinity ? 'INF' : n === -Infinity ? '-INF' : String(n));

interface AttrDef {
	field: ImportField;
	id: string;
	kind: 'STRING' | 'XHTML' | 'INTEGER' | 'REAL' | 'ENUMERATION';
	datatype: string;
	multi?: boolean;
	desc?: string;
}

const ENUMS: { id: string; name: string; values: readonly string[] }[] = [
	{ id: 'lw-dt-level', name: 'Level', values: LEVEL_VALUES },
	{ id: 'lw-dt-assurance', name: 'Assurance level', values: ASSURANCE_VALUES },
	{ id: 'lw-dt-method', name: 'Verification method', values: METHOD_VALUES },
	{ id: 'lw-dt-status', name: 'Status', values: STATUS_VALUES },
	{ id: 'lw-dt-criterion', name: 'Criterion', values: CRITERION_VALUES }
];
const enumValueId = (dt: string, v: string) => `${dt}-${v}`;

const ATTRS: AttrDef[] = [
	{ field: 'identifier', id: 'lw-ad-identifier', kind: 'STRING', datatype: 'lw-dt-string' },
	{ field: 'revision', id: 'lw-ad-revision', kind: 'INTEGER', datatype: 'lw-dt-integer' },
	{ field: 'title', id: 'lw-ad-title', kind: 'STRING', datatype: 'lw-dt-string' },
	{ field: 'statement', id: 'lw-ad-statement', kind: 'XHTML', datatype: 'lw-dt-xhtml' },
	{ field: 'rationale', id: 'lw-ad-rationale', kind: 'STRING', datatype: 'lw-dt-string' },
	{ field: 'level', id: 'lw-ad-level', kind: 'ENUMERATION', datatype: 'lw-dt-level' },
	{ field: 'assuranceLevel', id: 'lw-ad-assurance', kind: 'ENUMERATION', datatype: 'lw-dt-assurance' },
	{ field: 'methods', id: 'lw-ad-methods', kind: 'ENUMERATION', datatype: 'lw-dt-method', multi: true },
	{
		field: 'status',
		id: 'lw-ad-status',
		kind: 'ENUMERATION',
		datatype: 'lw-dt-status',
		desc: 'the review state when written; an import shows it and does not apply it (imported requirements are drafts)'
	},
	{ field: 'criterion', id: 'lw-ad-criterion', kind: 'ENUMERATION', datatype: 'lw-dt-criterion' },
	{ field: 'sectorLower', id: 'lw-ad-sector-lower', kind: 'REAL', datatype: 'lw-dt-real' },
	{
		field: 'sectorUpper',
		id: 'lw-ad-sector-upper',
		kind: 'REAL',
		datatype: 'lw-dt-real',
		desc: 'INF for an unbounded sector'
	},
	{ field: 'minGainMarginDb', id: 'lw-ad-min-gain-margin', kind: 'REAL', datatype: 'lw-dt-real' },
	{ field: 'minPhaseMarginDeg', id: 'lw-ad-min-phase-margin', kind: 'REAL', datatype: 'lw-dt-real' },
	{
		field: 'requiredMargin',
		id: 'lw-ad-required-margin',
		kind: 'REAL',
		datatype: 'lw-dt-real',
		desc: 'a fraction: 0.2 means the proved upper bound must exceed k2 by 20 %'
	},
	{
		field: 'operatingPoints',
		id: 'lw-ad-operating-points',
		kind: 'STRING',
		datatype: 'lw-dt-string',
		desc: 'labels, one per line; absent: every operating point'
	},
	{ field: 'modelName', id: 'lw-ad-model', kind: 'STRING', datatype: 'lw-dt-string' },
	{
		field: 'modelVersion',
		id: 'lw-ad-model-version',
		kind: 'INTEGER',
		datatype: 'lw-dt-integer',
		desc: 'absent: the latest version'
	},
	{
		field: 'modelHash',
		id: 'lw-ad-model-hash',
		kind: 'STRING',
		datatype: 'lw-dt-string',
		desc: 'SHA-256 of the model version in force when written'
	}
];

/** The attributes Loopwarden writes, in order: name (LONG-NAME), ReqIF kind, note (the methods page lists them). */
export const REQIF_ATTRIBUTES = ATTRS.map((a) => ({
	field: a.field,
	name: FIELD_NAMES[a.field],
	kind: a.kind === 'ENUMERATION' ? `enumeration${a.multi ? ' (several values)' : ''}` : a.kind.toLowerCase(),
	values: ENUMS.find((e) => e.id === a.datatype)?.values.join(', ') ?? '',
	note: a.desc ?? ''
}));

/** The statement as XHTML (§10.8.20 ATTRIBUTE-VALUE-XHTML, from memory): paragraphs and line breaks. */
export function statementXhtml(text: string): string {
	// Lossless for plain text: "\n\n" separates paragraphs, "\n" is a <br/>, and spaces a reader would
	// drop (at a paragraph's ends) are written as character references.
	const paras = text.split('\n\n').map((p) => {
		const body = p
			.split('\n')
			.map((l) => escText(l).replace(/^ +| +$/g, (m) => '&#32;'.repeat(m.length)))
			.join('<xhtml:br/>');
		return body ? `<xhtml:p>${body}</xhtml:p>` : '<xhtml:p/>';
	});
	return `<xhtml:div>${paras.join('')}</xhtml:div>`;
}

function valueOf(r: InterchangeRequirement, field: ImportField): RawValue | undefined {
	const s = r.spec;
	switch (field) {
		case 'identifier':
			return r.identifier;
		case 'revision':
			return r.revision;
		case 'title':
			return r.title;
		case 'statement':
			return r.statement;
		case 'rationale':
			return r.rationale;
		case 'level':
			return [r.level];
		case 'assuranceLevel':
			return [r.assuranceLevel];
		case 'methods':
			return r.methods;
		case 'status':
			return [r.status];
		case 'criterion':
			return s ? [s.criterion] : undefined;
		case 'sectorLower':
			return s?.sectorLower ?? undefined;
		case 'sectorUpper':
			return s?.sectorUpper ?? undefined;
		case 'minGainMarginDb':
			return s?.minGainMarginDb ?? undefined;
		case 'minPhaseMarginDeg':
			return s?.minPhaseMarginDeg ?? undefined;
		case 'requiredMargin':
			return s?.requiredMargin ?? undefined;
		case 'operatingPoints':
			return s?.operatingPoints ? s.operatingPoints.join('\n') : undefined;
		case 'modelName':
			return s?.modelName;
		case 'modelVersion':
			return s?.modelVersion ?? undefined;
		case 'modelHash':
			return s?.modelHash ?? undefined;
		default:
			return undefined;
	}
}

function attributeValue(a: AttrDef, v: RawValue): string {
	const def = (k: string) =>
		`<DEFINITION><ATTRIBUTE-DEFINITION-${k}-REF>${a.id}</ATTRIBUTE-DEFINITION-${k}-REF></DEFINITION>`;
	switch (a.kind) {
		case 'STRING':
			return `<ATTRIBUTE-VALUE-STRING THE-VALUE="${escAttr(String(v))}">${def('STRING')}</ATTRIBUTE-VALUE-STRING>`;
		case 'INTEGER':
			return `<ATTRIBUTE-VALUE-INTEGER THE-VALUE="${String(v)}">${def('INTEGER')}</ATTRIBUTE-VALUE-INTEGER>`;
		case 'REAL':
			return `<ATTRIBUTE-VALUE-REAL THE-VALUE="${xsdDouble(v as number)}">${def('REAL')}</ATTRIBUTE-VALUE-REAL>`;
		case 'XHTML':
			return `<ATTRIBUTE-VALUE-XHTML>${def('XHTML')}<THE-VALUE>${statementXhtml(String(v))}</THE-VALUE></ATTRIBUTE-VALUE-XHTML>`;
		case 'ENUMERATION': {
			const refs = (v as string[]).map(
				(x) => `<ENUM-VALUE-REF>${enumValueId(a.datatype, x)}</ENUM-VALUE-REF>`
			);
			return `<ATTRIBUTE-VALUE-ENUMERATION>${def('ENUMERATION')}<VALUES>${refs.join('')}</VALUES></ATTRIBUTE-VALUE-ENUMERATION>`;
		}
	}
}

const latest = (a: string, b: string) => (a > b ? a : b);

/**
 * The document as ReqIF 1.2, in chunks (one per requirement or relation), so a large export is
 * streamed. `creationTime` is the only value that is not derived from the content.
 */
export function* reqifChunks(doc: InterchangeDocument, creationTime: string): Generator<string> {
	const t = MAPPING_DATE;
	// §10.2 REQ-IF-HEADER (from memory): CREATION-TIME, REQ-IF-TOOL-ID, REQ-IF-VERSION (fixed "1.0"),
	// SOURCE-TOOL-ID and TITLE are required, in the schema's sequence.
	yield (
		`<?xml version="1.0" encoding="UTF-8"?>\n<REQ-IF xmlns="${REQIF_NS}" xmlns:xhtml="${XHTML_NS}">\n` +
		`<THE-HEADER><REQ-IF-HEADER IDENTIFIER="lw-header"><COMMENT>${escText(doc.comment)}</COMMENT>` +
		`<CREATION-TIME>${creationTime}</CREATION-TIME><REQ-IF-TOOL-ID>Loopwarden</REQ-IF-TOOL-ID>` +
		`<REQ-IF-VERSION>1.0</REQ-IF-VERSION><SOURCE-TOOL-ID>Loopwarden</SOURCE-TOOL-ID>` +
		`<TITLE>${escText(doc.title)}</TITLE></REQ-IF-HEADER></THE-HEADER>\n<CORE-CONTENT><REQ-IF-CONTENT>\n`
	);

	// §10.5 datatypes (from memory): each enumeration value has PROPERTIES / EMBEDDED-VALUE (KEY, OTHER-CONTENT).
	let s = '<DATATYPES>\n';
	s += `<DATATYPE-DEFINITION-STRING IDENTIFIER="lw-dt-string" LAST-CHANGE="${t}" LONG-NAME="Text" MAX-LENGTH="4000"/>\n`;
	s += `<DATATYPE-DEFINITION-XHTML IDENTIFIER="lw-dt-xhtml" LAST-CHANGE="${t}" LONG-NAME="Formatted text"/>\n`;
	s += `<DATATYPE-DEFINITION-INTEGER IDENTIFIER="lw-dt-integer" LAST-CHANGE="${t}" LONG-NAME="Whole number" MAX="2147483647" MIN="0"/>\n`;
	s += `<DATATYPE-DEFINITION-REAL ACCURACY="17" IDENTIFIER="lw-dt-real" LAST-CHANGE="${t}" LONG-NAME="Number" MAX="INF" MIN="-INF"/>\n`;
	for (const e of ENUMS) {
		s += `<DATATYPE-DEFINITION-ENUMERATION IDENTIFIER="${e.id}" LAST-CHANGE="${t}" LONG-NAME="${escAttr(e.name)}"><SPECIFIED-VALUES>`;
		e.values.forEach((v, i) => {
			s += `<ENUM-VALUE IDENTIFIER="${enumValueId(e.id, v)}" LAST-CHANGE="${t}" LONG-NAME="${escAttr(v)}"><PROPERTIES><EMBEDDED-VALUE KEY="${i}" OTHER-CONTENT=""/></PROPERTIES></ENUM-VALUE>`;
		});
		s += '</SPECIFIED-VALUES></DATATYPE-DEFINITION-ENUMERATION>\n';
	}
	s += '</DATATYPES>\n<SPEC-TYPES>\n';
	// §10.6 SPEC-TYPES (from memory): a SPEC-OBJECT-TYPE lists its ATTRIBUTE-DEFINITION-* (each with TYPE).
	s += `<SPEC-OBJECT-TYPE IDENTIFIER="lw-type-requirement" LAST-CHANGE="${t}" LONG-NAME="Stability requirement"><SPEC-ATTRIBUTES>`;
	for (const a of ATTRS) {
		const multi = a.kind === 'ENUMERATION' ? ` MULTI-VALUED="${a.multi ? 'true' : 'false'}"` : '';
		const desc = a.desc ? ` DESC="${escAttr(a.desc)}"` : '';
		s += `<ATTRIBUTE-DEFINITION-${a.kind}${desc} IDENTIFIER="${a.id}" LAST-CHANGE="${t}" LONG-NAME="${escAttr(FIELD_NAMES[a.field])}"${multi}><TYPE><DATATYPE-DEFINITION-${a.kind}-REF>${a.datatype}</DATATYPE-DEFINITION-${a.kind}-REF></TYPE></ATTRIBUTE-DEFINITION-${a.kind}>`;
	}
	s += '</SPEC-ATTRIBUTES></SPEC-OBJECT-TYPE>\n';
	s += `<SPEC-RELATION-TYPE DESC="SOURCE is derived from TARGET" IDENTIFIER="lw-type-derived-from" LAST-CHANGE="${t}" LONG-NAME="Derived from"/>\n`;
	s += `<SPECIFICATION-TYPE IDENTIFIER="lw-type-specification" LAST-CHANGE="${t}" LONG-NAME="Requirements document"/>\n`;
	s += '</SPEC-TYPES>\n<SPEC-OBJECTS>\n';
	yield s;

	const byId = new Map(doc.requirements.map((r) => [r.objectId, r]));
	for (const r of doc.requirements) {
		let o = `<SPEC-OBJECT IDENTIFIER="${r.objectId}" LAST-CHANGE="${r.lastChange}" LONG-NAME="${escAttr(r.identifier)}"><VALUES>`;
		for (const a of ATTRS) {
			const v = valueOf(r, a.field);
			if (v === undefined || v === null) continue;
			o += attributeValue(a, v);
		}
		o +=
			'</VALUES><TYPE><SPEC-OBJECT-TYPE-REF>lw-type-requirement</SPEC-OBJECT-TYPE-REF></TYPE></SPEC-OBJECT>\n';
		yield o;
	}
	yield '</SPEC-OBJECTS>\n<SPEC-RELATIONS>\n';
	// §10.7 SPEC-RELATION (from memory): SOURCE and TARGET reference SPEC-OBJECTs; TYPE its SPEC-RELATION-TYPE.
	for (const l of doc.links) {
		const c = byId.get(l.child);
		const p = byId.get(l.parent);
		if (!c || !p) continue;
		yield `<SPEC-RELATION IDENTIFIER="lw-rel-${l.child}-${l.parent}" LAST-CHANGE="${latest(c.lastChange, p.lastChange)}"><SOURCE><SPEC-OBJECT-REF>${l.child}</SPEC-OBJECT-REF></SOURCE><TARGET><SPEC-OBJECT-REF>${l.parent}</SPEC-OBJECT-REF></TARGET><TYPE><SPEC-RELATION-TYPE-REF>lw-type-derived-from</SPEC-RELATION-TYPE-REF></TYPE></SPEC-RELATION>\n`;
	}
	yield '</SPEC-RELATIONS>\n<SPECIFICATIONS>\n';

	// §10.9 SPECIFICATION / SPEC-HIERARCHY (from memory): a tree of references to SPEC-OBJECTs. Each
	// requirement sits once, under its first parent in the written order; every link is a SPEC-RELATION.
	const firstParent = new Map<string, string>();
	for (const l of doc.links) {
		if (!byId.has(l.child) || !byId.has(l.parent)) continue;
		const cur = firstParent.get(l.child);
		if (cur === undefined || order(byId, l.parent) < order(byId, cur)) firstParent.set(l.child, l.parent);
	}
	const kids = new Map<string | null, string[]>();
	for (const r of doc.requirements) {
		const p = firstParent.get(r.objectId) ?? null;
		if (!kids.has(p)) kids.set(p, []);
		kids.get(p)!.push(r.objectId);
	}
	// A cycle would leave its members unreached from the roots: they are placed at the top level.
	const placed = new Set<string>();
	const tree = (id: string): string => {
		placed.add(id);
		const r = byId.get(id)!;
		const below = (kids.get(id) ?? []).filter((k) => !placed.has(k));
		const children = below.length ? `<CHILDREN>${below.map(tree).join('')}</CHILDREN>` : '';
		return `<SPEC-HIERARCHY IDENTIFIER="lw-h-${id}" LAST-CHANGE="${r.lastChange}">${children}<OBJECT><SPEC-OBJECT-REF>${id}</SPEC-OBJECT-REF></OBJECT></SPEC-HIERARCHY>`;
	};
	const roots = [...(kids.get(null) ?? [])];
	const all = doc.requirements.reduce((m, r) => latest(m, r.lastChange), t);
	let spec = `<SPECIFICATION IDENTIFIER="lw-specification" LAST-CHANGE="${all}" LONG-NAME="${escAttr(doc.title)}"><CHILDREN>`;
	const top: string[] = [];
	for (const id of roots) top.push(tree(id));
	for (const r of doc.requirements) if (!placed.has(r.objectId)) top.push(tree(r.objectId));
	spec += top.join('\n');
	spec +=
		'</CHILDREN><TYPE><SPECIFICATION-TYPE-REF>lw-type-specification</SPECIFICATION-TYPE-REF></TYPE></SPECIFICATION>\n';
	yield spec;
	yield '</SPECIFICATIONS>\n</REQ-IF-CONTENT></CORE-CONTENT>\n</REQ-IF>\n';
}

const orderCache = new WeakMap<Map<string, InterchangeRequirement>, Map<string, number>>();
function order(byId: Map<string, InterchangeRequirement>, id: string): number {
	let m = orderCache.get(byId);
	if (!m) {
		m = new Map([...byId.keys()].map((k, i) => [k, i]));
		orderCache.set(byId, m);
	}
	return m.get(id) ?? Infinity;
}

/** The whole document as one string (tests, small exports). */
export const reqifText = (doc: InterchangeDocument, creationTime: string) =>
	[...reqifChunks(doc, creationTime)].join('');

// ---- reading ----

/** The file is not XML, or not ReqIF: `where` names the place (line and column, or the element). */
export class ReqifFormatError extends Error {
	constructor(
		public kind: 'not-xml' | 'not-reqif',
		message: string,
		public where: string
	) {
		super(message);
		this.name = 'ReqifFormatError';
	}
}

export type ReqifValueKind = 'STRING' | 'XHTML' | 'INTEGER' | 'REAL' | 'BOOLEAN' | 'DATE' | 'ENUMERATION';

export interface ReqifAttribute {
	id: string;
	longName: string;
	kind: ReqifValueKind;
	datatype: string;
}
export interface ReqifObjectType {
	id: string;
	longName: string;
	attributes: ReqifAttribute[];
}
export type ReqifValue =
	| { kind: 'ENUMERATION'; values: string[]; unknown: string[] }
	| { kind: Exclude<ReqifValueKind, 'ENUMERATION'>; text: string };
export interface ReqifObject {
	id: string;
	type: string;
	lastChange: string;
	longName: string;
	values: Map<string, ReqifValue>;
}
export interface ReqifHierarchy {
	object: string;
	children: ReqifHierarchy[];
}
export interface ReqifFile {
	header: { title: string; creationTime: string; sourceToolId: string; comment: string };
	objectTypes: ReqifObjectType[];
	relationTypes: { id: string; longName: string }[];
	objects: ReqifObject[];
	relations: { id: string; type: string; source: string; target: string }[];
	specifications: { id: string; longName: string; children: ReqifHierarchy[] }[];
}

const KINDS: ReqifValueKind[] = ['STRING', 'XHTML', 'INTEGER', 'REAL', 'BOOLEAN', 'DATE', 'ENUMERATION'];

/** XML's predefined entities and character references (the parser is told to leave them alone). */
export function decodeXml(s: string): string {
	return s.replace(/&(#x[0-9a-fA-F]+|#[0-9]+|amp|lt|gt|quot|apos);/g, (_, e: string) => {
		if (e[0] === '#') {
			const code = e[1] === 'x' ? parseInt(e.slice(2), 16) : parseInt(e.slice(1), 10);
			return String.fromCodePoint(code);
		}
		return { amp: '&', lt: '<', gt: '>', quot: '"', apos: "'" }[e]!;
	});
}
// XML 1.0 §3.3.3: literal whitespace characters in an attribute value read as spaces.
const attr = (v: unknown) => (typeof v === 'string' ? decodeXml(v.replace(/[\t\n\r]/g, ' ')) : '');

type Node = Record<string, unknown>;
const arr = (v: unknown): Node[] => (v == null ? [] : Array.isArray(v) ? (v as Node[]) : [v as Node]);
const one = (v: unknown): Node | undefined => arr(v)[0];
/** The text inside a *-REF element. */
const refText = (v: unknown): string => {
	const n = arr(v)[0] as unknown;
	if (typeof n === 'string') return decodeXml(n).trim();
	if (n && typeof n === 'object' && '#text' in (n as Node))
		return decodeXml(String((n as Node)['#text'])).trim();
	return '';
};

const ARRAYS = new Set([
	'SPEC-OBJECT',
	'SPEC-RELATION',
	'SPECIFICATION',
	'SPEC-HIERARCHY',
	'SPEC-OBJECT-TYPE',
	'SPEC-RELATION-TYPE',
	'ENUM-VALUE',
	'ENUM-VALUE-REF',
	...KINDS.map((k) => `DATATYPE-DEFINITION-${k}`),
	...KINDS.map((k) => `ATTRIBUTE-DEFINITION-${k}`),
	...KINDS.map((k) => `ATTRIBUTE-VALUE-${k}`)
]);

/** Parse a ReqIF file. Throws ReqifFormatError when it is not XML or not ReqIF. */
export function parseReqif(text: string): ReqifFile {
	const valid = XMLValidator.validate(text);
	if (valid !== true) {
		const { line, col, msg } = valid.err;
		throw new ReqifFormatError(
			'not-xml',
			`The file is not well-formed XML: ${msg}`,
			`line ${line}, column ${col}`
		);
	}
	const parser = new XMLParser({
		ignoreAttributes: false,
		attributeNamePrefix: '@',
		removeNSPrefix: true,
		trimValues: false,
		parseTagValue: false,
		parseAttributeValue: false,
		processEntities: false,
		ignoreDeclaration: true,
		ignorePiTags: true,
		stopNodes: ['*.THE-VALUE', '*.THE-ORIGINAL-VALUE'],
		isArray: (name) => ARRAYS.has(name)
	});
	const doc = parser.parse(text) as Node;
	const rootName = Object.keys(doc).find((k) => !k.startsWith('#') && !k.startsWith('@'));
	if (rootName !== 'REQ-IF') {
		throw new ReqifFormatError(
			'not-reqif',
			`The file is XML but not ReqIF: its root element is <${rootName ?? 'none'}>, not <REQ-IF>.`,
			'root element'
		);
	}
	if (
		!new RegExp(`xmlns(?::\\w+)?\\s*=\\s*["']${REQIF_NS.replace(/[./]/g, '\\$&')}["']`).test(
			text.slice(0, 4000)
		)
	) {
		throw new ReqifFormatError(
			'not-reqif',
			`<REQ-IF> is not in the ReqIF 1.2 namespace ${REQIF_NS}.`,
			'REQ-IF, attribute xmlns'
		);
	}
	const root = (one(doc['REQ-IF']) ?? {}) as Node;
	const headerNode = one(one(root['THE-HEADER'])?.['REQ-IF-HEADER']);
	const content = one(one(root['CORE-CONTENT'])?.['REQ-IF-CONTENT']);
	if (!content) {
		throw new ReqifFormatError(
			'not-reqif',
			'The file has no CORE-CONTENT / REQ-IF-CONTENT.',
			'REQ-IF / CORE-CONTENT'
		);
	}
	const txt = (v: unknown) => (typeof v === 'string' ? decodeXml(v).trim() : refText(v));
	const header = {
		title: txt(headerNode?.['TITLE']),
		creationTime: txt(headerNode?.['CREATION-TIME']),
		sourceToolId: txt(headerNode?.['SOURCE-TOOL-ID']),
		comment: txt(headerNode?.['COMMENT'])
	};

	const enumNames = new Map<string, string>();
	const datatypes = one(content['DATATYPES']) ?? {};
	for (const dt of arr(datatypes['DATATYPE-DEFINITION-ENUMERATION'])) {
		for (const ev of arr(one(dt['SPECIFIED-VALUES'])?.['ENUM-VALUE'])) {
			enumNames.set(attr(ev['@IDENTIFIER']), attr(ev['@LONG-NAME']) || attr(ev['@IDENTIFIER']));
		}
	}

	const types = one(content['SPEC-TYPES']) ?? {};
	const attrKind = new Map<string, ReqifValueKind>();
	const objectTypes: ReqifObjectType[] = arr(types['SPEC-OBJECT-TYPE']).map((t) => {
		const attributes: ReqifAttribute[] = [];
		const sa = one(t['SPEC-ATTRIBUTES']) ?? {};
		for (const k of KINDS) {
			for (const a of arr(sa[`ATTRIBUTE-DEFINITION-${k}`])) {
				const id = attr(a['@IDENTIFIER']);
				attrKind.set(id, k);
				attributes.push({
					id,
					longName: attr(a['@LONG-NAME']) || id,
					kind: k,
					datatype: refText(one(a['TYPE'])?.[`DATATYPE-DEFINITION-${k}-REF`])
				});
			}
		}
		return {
			id: attr(t['@IDENTIFIER']),
			longName: attr(t['@LONG-NAME']) || attr(t['@IDENTIFIER']),
			attributes
		};
	});
	const relationTypes = arr(types['SPEC-RELATION-TYPE']).map((t) => ({
		id: attr(t['@IDENTIFIER']),
		longName: attr(t['@LONG-NAME']) || attr(t['@IDENTIFIER'])
	}));

	const readValues = (n: Node) => {
		const values = new Map<string, ReqifValue>();
		const v = one(n['VALUES']) ?? {};
		for (const k of KINDS) {
			for (const av of arr(v[`ATTRIBUTE-VALUE-${k}`])) {
				const def = refText(one(av['DEFINITION'])?.[`ATTRIBUTE-DEFINITION-${k}-REF`]);
				if (k === 'ENUMERATION') {
					const refs = arr(one(av['VALUES'])?.['ENUM-VALUE-REF']).map((r) => refText([r]));
					values.set(def, {
						kind: k,
						values: refs.filter((r) => enumNames.has(r)).map((r) => enumNames.get(r)!),
						unknown: refs.filter((r) => !enumNames.has(r))
					});
				} else if (k === 'XHTML') {
					const raw = av['THE-VALUE'];
					values.set(def, { kind: k, text: xhtmlToText(typeof raw === 'string' ? raw : '') });
				} else {
					values.set(def, { kind: k, text: attr(av['@THE-VALUE']) });
				}
			}
		}
		return values;
	};

	const objects: ReqifObject[] = arr(one(content['SPEC-OBJECTS'])?.['SPEC-OBJECT']).map((o) => ({
		id: attr(o['@IDENTIFIER']),
		type: refText(one(o['TYPE'])?.['SPEC-OBJECT-TYPE-REF']),
		lastChange: attr(o['@LAST-CHANGE']),
		longName: attr(o['@LONG-NAME']),
		values: readValues(o)
	}));
	const relations = arr(one(content['SPEC-RELATIONS'])?.['SPEC-RELATION']).map((r) => ({
		id: attr(r['@IDENTIFIER']),
		type: refText(one(r['TYPE'])?.['SPEC-RELATION-TYPE-REF']),
		source: refText(one(r['SOURCE'])?.['SPEC-OBJECT-REF']),
		target: refText(one(r['TARGET'])?.['SPEC-OBJECT-REF'])
	}));
	const hier = (h: Node): ReqifHierarchy => ({
		object: refText(one(h['OBJECT'])?.['SPEC-OBJECT-REF']),
		children: arr(one(h['CHILDREN'])?.['SPEC-HIERARCHY']).map(hier)
	});
	const specifications = arr(one(content['SPECIFICATIONS'])?.['SPECIFICATION']).map((s) => ({
		id: attr(s['@IDENTIFIER']),
		longName: attr(s['@LONG-NAME']),
		children: arr(one(s['CHILDREN'])?.['SPEC-HIERARCHY']).map(hier)
	}));
	return { header, objectTypes, relationTypes, objects, relations, specifications };
}

// ---- XHTML to text ----

type XNode = Record<string, unknown>;
// A <br/> while inline text is collected: U+0000 cannot occur in XML text (XML 1.0 §2.2), so it is
// never the file's own character.
const BR = String.fromCharCode(0);
const AROUND_BR = new RegExp(` *${BR} *`, 'g');
const BLOCKS = new Set([
	'p',
	'div',
	'h1',
	'h2',
	'h3',
	'h4',
	'h5',
	'h6',
	'ul',
	'ol',
	'table',
	'blockquote',
	'pre',
	'dl',
	'hr'
]);
const tagOf = (n: XNode) => Object.keys(n).find((k) => k !== ':@') ?? '';

/**
 * XHTML content -> plain text: paragraphs (p, div, headings) separated by a blank line, <br/> as a line
 * break, list items as "- item" / "1. item" lines (nested ones indented), table rows as cells joined
 * by " | ". Literal line breaks and tabs in the markup are layout and read as one space; spaces written
 * as character references are kept.
 */
export function xhtmlToText(xhtml: string): string {
	const parser = new XMLParser({
		preserveOrder: true,
		ignoreAttributes: true,
		removeNSPrefix: true,
		trimValues: false,
		parseTagValue: false,
		processEntities: false
	});
	let tree: XNode[];
	try {
		tree = parser.parse(`<root>${xhtml}</root>`) as XNode[];
	} catch {
		return decodeXml(xhtml.replace(/<[^>]*>/g, ' ')).trim();
	}
	const rootKids = (tree[0]?.root as XNode[]) ?? [];
	return blocksOf(rootKids, 0).join('\n\n');
}

function inline(nodes: XNode[]): string {
	let s = '';
	for (const n of nodes) {
		const tag = tagOf(n);
		if (tag === '#text') s += String(n['#text']).replace(/[ ]*[\t\n\r][\t\n\r ]*/g, ' ');
		else if (tag === 'br') s += BR;
		else s += inline((n[tag] as XNode[]) ?? []);
	}
	return s;
}
// Literal spaces at a block's ends and around a line break are layout; referenced ones (&#32;) are text.
const finish = (raw: string) =>
	decodeXml(raw.replace(/^ +| +$/g, '').replace(AROUND_BR, BR)).replaceAll(BR, '\n');

function blocksOf(nodes: XNode[], depth: number): string[] {
	const out: string[] = [];
	let run: XNode[] = [];
	const flush = () => {
		if (!run.length) return;
		const t = inline(run);
		if (t.replaceAll(BR, '').trim() !== '' || run.some((n) => tagOf(n) !== '#text')) out.push(finish(t));
		run = [];
	};
	for (const n of nodes) {
		const tag = tagOf(n);
		const kids = (n[tag] as XNode[]) ?? [];
		if (!BLOCKS.has(tag)) {
			run.push(n);
			continue;
		}
		flush();
		if (tag === 'div' || tag === 'blockquote') {
			if (kids.some((k) => BLOCKS.has(tagOf(k)))) out.push(...blocksOf(kids, depth));
			else out.push(finish(inline(kids)));
		} else if (tag === 'ul' || tag === 'ol' || tag === 'dl') {
			out.push(listText(tag, kids, depth));
		} else if (tag === 'table') {
			out.push(tableRows(kids).join('\n'));
		} else if (tag === 'hr') {
			out.push('---');
		} else {
			out.push(finish(inline(kids)));
		}
	}
	flush();
	return out;
}

function listText(tag: string, items: XNode[], depth: number): string {
	const lines: string[] = [];
	let i = 0;
	for (const it of items) {
		const t = tagOf(it);
		if (t !== 'li' && t !== 'dt' && t !== 'dd') continue;
		i++;
		const kids = (it[t] as XNode[]) ?? [];
		const own = kids.filter((k) => !['ul', 'ol'].includes(tagOf(k)));
		const nested = kids.filter((k) => ['ul', 'ol'].includes(tagOf(k)));
		const mark = tag === 'ol' ? `${i}. ` : '- ';
		lines.push('  '.repeat(depth) + mark + blocksOf(own, depth).join(' '));
		for (const n of nested) lines.push(listText(tagOf(n), (n[tagOf(n)] as XNode[]) ?? [], depth + 1));
	}
	return lines.join('\n');
}

function tableRows(nodes: XNode[]): string[] {
	const rows: string[] = [];
	for (const n of nodes) {
		const t = tagOf(n);
		const kids = (n[t] as XNode[]) ?? [];
		if (t === 'tr') {
			const cells = kids
				.filter((c) => ['td', 'th'].includes(tagOf(c)))
				.map((c) => blocksOf((c[tagOf(c)] as XNode[]) ?? [], 0).join(' '));
			rows.push(cells.join(' | '));
		} else if (['thead', 'tbody', 'tfoot'].includes(t)) rows.push(...tableRows(kids));
	}
	return rows;
}

// ---- mapping a file onto our fields ----

export interface ReqifMapping {
	/** Per SPEC-OBJECT-TYPE (by LONG-NAME): whether its objects are requirements, and attribute -> field. */
	types: Record<string, { import: boolean; attributes: Record<string, ImportField | ''> }>;
	/** SPEC-RELATION-TYPEs (by LONG-NAME) read as "derived from" (SOURCE derived from TARGET). */
	relationTypes: Record<string, boolean>;
	/** Read the SPECIFICATION tree's nesting as "derived from" too. */
	hierarchyLinks: boolean;
	defaults: ImportDefaults;
}

/** The mapping for a file: the remembered one where it names the file's types, else guessed by name. */
export function reqifMappingFor(file: ReqifFile, remembered?: Partial<ReqifMapping> | null): ReqifMapping {
	const types: ReqifMapping['types'] = {};
	for (const t of file.objectTypes) {
		const old = remembered?.types?.[t.longName];
		const attributes: Record<string, ImportField | ''> = {};
		for (const a of t.attributes) {
			const kept = old?.attributes?.[a.longName];
			attributes[a.longName] = kept !== undefined ? kept : (guessField(a.longName) ?? '');
		}
		// A type is taken as requirements unless it maps nothing onto a statement or title (headings, notes).
		const useful = Object.values(attributes).some((f) => f === 'statement' || f === 'title');
		types[t.longName] = { import: old?.import ?? useful, attributes };
	}
	const relationTypes: Record<string, boolean> = {};
	for (const r of file.relationTypes) {
		relationTypes[r.longName] =
			remembered?.relationTypes?.[r.longName] ?? /deriv|parent|refine|satisf|trace/i.test(r.longName);
	}
	return {
		types,
		relationTypes,
		hierarchyLinks: remembered?.hierarchyLinks ?? true,
		defaults: { ...(remembered?.defaults ?? {}) }
	};
}

const ENUM_FIELDS: ImportField[] = ['level', 'assuranceLevel', 'methods', 'status', 'criterion'];

/**
 * The file's requirements as records, through the mapping; problems for what cannot be read (an
 * enumeration value the file does not define, a value of the wrong kind, a relation to an object that
 * is not in the file).
 */
export function reqifRecords(
	file: ReqifFile,
	mapping: ReqifMapping
): { records: ImportRecord[]; problems: ImportProblem[]; skipped: number } {
	const problems: ImportProblem[] = [];
	const typeById = new Map(file.objectTypes.map((t) => [t.id, t]));
	const records: ImportRecord[] = [];
	const used = new Set<string>();
	let skipped = 0;
	for (const o of file.objects) {
		const type = typeById.get(o.type);
		const m = type ? mapping.types[type.longName] : undefined;
		if (!type) {
			problems.push({
				objectId: o.id,
				message: `Its type ${o.type || '(none)'} is not defined in SPEC-TYPES.`
			});
			continue;
		}
		if (!m?.import) {
			skipped++;
			continue;
		}
		used.add(o.id);
		const rec: ImportRecord = {
			key: o.id,
			objectId: o.id,
			row: null,
			values: {},
			parentKeys: [],
			parentIdentifiers: [],
			sources: {},
			lastChange: o.lastChange || null
		};
		for (const a of type.attributes) {
			const field = m.attributes[a.longName];
			if (!field) continue;
			rec.sources[field] = a.longName;
			const v = o.values.get(a.id);
			if (!v) continue;
			const bad = (why: string) => problems.push({ objectId: o.id, field, message: `${a.longName}: ${why}` });
			if (v.kind === 'ENUMERATION') {
				for (const u of v.unknown) bad(`the enumeration value ${u} is not defined in the file's DATATYPES.`);
				if (ENUM_FIELDS.includes(field)) {
					rec.values[field] =
						field === 'methods' || field === 'operatingPoints' ? v.values : (v.values[0] ?? null);
					if (field !== 'methods' && v.values.length > 1)
						bad(`one value expected, the file gives ${v.values.join(', ')}.`);
				} else rec.values[field] = v.values.join(', ');
				continue;
			}
			const text = v.text;
			switch (field) {
				case 'revision':
				case 'modelVersion': {
					const n = Number(text);
					if (!Number.isInteger(n) || n < 0) bad(`"${text}" is not a whole number.`);
					else rec.values[field] = n;
					break;
				}
				case 'sectorLower':
				case 'sectorUpper':
				case 'minGainMarginDb':
				case 'minPhaseMarginDeg':
				case 'requiredMargin': {
					const n = /^\+?INF$/.test(text.trim())
						? Infinity
						: /^-INF$/.test(text.trim())
							? -Infinity
							: Number(text);
					if (text.trim() === '' || Number.isNaN(n)) bad(`"${text}" is not a number.`);
					else rec.values[field] = n;
					break;
				}
				case 'methods':
				case 'level':
				case 'assuranceLevel':
				case 'status':
				case 'criterion':
					rec.values[field] =
						field === 'methods'
							? text
									.split(/[,;\n]+/)
									.map((x) => x.trim())
									.filter(Boolean)
							: text.trim();
					break;
				case 'operatingPoints':
					rec.values[field] = text
						.split('\n')
						.map((x) => x.trim())
						.filter(Boolean);
					break;
				case 'parentIdentifier':
					rec.parentIdentifiers = text
						.split(/[,;\n]+/)
						.map((x) => x.trim())
						.filter(Boolean);
					break;
				default:
					rec.values[field] = text;
			}
		}
		records.push(rec);
	}
	const byKey = new Map(records.map((r) => [r.key, r]));
	const allIds = new Set(file.objects.map((o) => o.id));
	const addParent = (child: string, parent: string) => {
		const c = byKey.get(child);
		if (c && byKey.has(parent) && !c.parentKeys.includes(parent)) c.parentKeys.push(parent);
	};
	const relType = new Map(file.relationTypes.map((t) => [t.id, t.longName]));
	for (const r of file.relations) {
		if (!mapping.relationTypes[relType.get(r.type) ?? '']) continue;
		// §10.7 (from memory): SOURCE and TARGET must reference SPEC-OBJECTs; one that is not in the file
		// cannot be linked.
		for (const [end, id] of [
			['SOURCE', r.source],
			['TARGET', r.target]
		] as const) {
			if (!allIds.has(id)) {
				problems.push({
					objectId: r.id,
					message: `The relation's ${end} is ${id || '(empty)'}, which is not an object of this file.`
				});
			}
		}
		if (used.has(r.source) && used.has(r.target)) addParent(r.source, r.target);
	}
	if (mapping.hierarchyLinks) {
		// Nesting under an object that is not imported (a heading) passes to the nearest imported ancestor.
		const walk = (nodes: ReqifHierarchy[], parent: string | null) => {
			for (const h of nodes) {
				if (!allIds.has(h.object)) {
					problems.push({
						objectId: h.object || '(empty)',
						message: 'The SPECIFICATION refers to an object that is not in the file.'
					});
					continue;
				}
				if (parent && used.has(h.object)) addParent(h.object, parent);
				walk(h.children, used.has(h.object) ? h.object : parent);
			}
		};
		for (const s of file.specifications) walk(s.children, null);
	}
	return { records, problems, skipped };
}

/** Every field a mapping can name (for the preview's selects). */
export const MAPPABLE_FIELDS = IMPORT_FIELDS;
