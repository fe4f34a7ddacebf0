import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { matchEnum, sheetRecords } from '../../../src/lib/requirements/interchange';
import { STATUSES } from '../../../src/lib/server/requirements/schema';
import {
	REQIF_NS,
	ReqifFormatError,
	objectIdFor,
	parseReqif,
	reqifMappingFor,
	reqifRecords,
	reqifText,
	xhtmlToText,
	type InterchangeDocument
} from '../../../src/lib/requirements/reqif';

// ReqIF written and read (src/lib/requirements/reqif.ts). Structural rules cite the OMG ReqIF 1.2
// specification (formal/2016-07-01); clause numbers are from memory, the class names are the
// specification's. Files are also checked against the published schema with xmllint
// (tests/reqif/SOURCES.md).

const schemaDir = resolve('tests/reqif');
function validate(text: string) {
	const dir = mkdtempSync(join(tmpdir(), 'lw-reqif-unit-'));
	const f = join(dir, 'f.reqif');
	writeFileSync(f, text);
	const r = spawnSync('xmllint', ['--nonet', '--noout', '--schema', `${schemaDir}/reqif.xsd`, f], {
		encoding: 'utf8',
		env: { ...process.env, XML_CATALOG_FILES: `${schemaDir}/catalog.xml` }
	});
	return { status: r.status, out: `${r.stdout}${r.stderr}` };
}

const doc = (statement = 'The loop shall be stable.'): InterchangeDocument => ({
	title: 'Test project',
	comment: 'caution',
	requirements: [
		{
			objectId: objectIdFor('T-001'),
			identifier: 'T-001',
			revision: 3,
			lastChange: '2026-11-01T10:00:00.000Z',
			title: 'System <loop> & "pitch"',
			statement,
			rationale: 'Line one\nline two\ttabbed',
			level: 'system',
			assuranceLevel: 'B',
			methods: ['analysis', 'test'],
			status: 'in-review',
			spec: {
				criterion: 'circle',
				sectorLower: 0.5,
				sectorUpper: Infinity,
				minGainMarginDb: null,
				minPhaseMarginDeg: null,
				requiredMargin: 0.2,
				operatingPoints: ['hover, 20 C', 'cruise'],
				modelName: 'Pitch plant',
				modelVersion: 2,
				modelHash: 'a'.repeat(64)
			}
		},
		{
			objectId: objectIdFor('T-002'),
			identifier: 'T-002',
			revision: 1,
			lastChange: '2026-11-02T10:00:00.000Z',
			title: 'Child',
			statement: 'The child shall hold.',
			rationale: '',
			level: 'loop',
			assuranceLevel: 'C',
			methods: ['inspection'],
			status: 'draft',
			spec: null
		}
	],
	links: [{ child: objectIdFor('T-002'), parent: objectIdFor('T-001') }]
});

describe('writing ReqIF', () => {
	const text = reqifText(doc(), '2026-12-02T10:00:00.000Z');

	it('validates against the ReqIF 1.2 schema (xmllint)', () => {
		expect(validate(text)).toMatchObject({ status: 0 });
	});

	it('has the structure of the specification', () => {
		// Clause 10.2 (from memory), class ReqIF: the root REQ-IF in the namespace of the 1.2 schema,
		// THE-HEADER before CORE-CONTENT.
		expect(text).toMatch(
			new RegExp(`^<\\?xml[^>]*\\?>\\n<REQ-IF xmlns="${REQIF_NS.replace(/[./]/g, '\\$&')}"`)
		);
		expect(text.indexOf('<THE-HEADER>')).toBeLessThan(text.indexOf('<CORE-CONTENT>'));
		// Class ReqIFHeader (clause 10.2, from memory): REQ-IF-VERSION is "1.0" for ReqIF 1.x files.
		expect(text).toContain('<REQ-IF-VERSION>1.0</REQ-IF-VERSION>');
		// Class ReqIFContent (clause 10.3, from memory): DATATYPES, SPEC-TYPES, SPEC-OBJECTS,
		// SPEC-RELATIONS, SPECIFICATIONS in this order.
		const order = [
			'<DATATYPES>',
			'<SPEC-TYPES>',
			'<SPEC-OBJECTS>',
			'<SPEC-RELATIONS>',
			'<SPECIFICATIONS>'
		].map((t) => text.indexOf(t));
		expect(order.every((x, i) => x > 0 && (i === 0 || x > order[i - 1]))).toBe(true);
		// Class Identifiable (clause 10.1, from memory): every identifiable element has an IDENTIFIER,
		// an xsd:ID (no leading digit, unique in the file) and a LAST-CHANGE.
		const ids = [
			...text.matchAll(
				/<(?:SPEC-OBJECT|SPEC-RELATION|SPEC-HIERARCHY|SPECIFICATION|ENUM-VALUE|DATATYPE-DEFINITION-\w+|ATTRIBUTE-DEFINITION-\w+|SPEC-OBJECT-TYPE|SPEC-RELATION-TYPE|SPECIFICATION-TYPE) ([^>]*)>/g
			)
		].map((m) => m[1]);
		expect(ids.length).toBeGreaterThan(30);
		for (const a of ids) {
			expect(a).toMatch(/IDENTIFIER="[A-Za-z_][\w.-]*"/);
			expect(a).toMatch(/LAST-CHANGE="\d{4}-\d\d-\d\dT/);
		}
		const values = ids.map((a) => /IDENTIFIER="([^"]+)"/.exec(a)![1]);
		expect(new Set(values).size).toBe(values.length);
		// Class EnumValue (clause 10.5, from memory): each value carries PROPERTIES / EMBEDDED-VALUE.
		expect(text).toMatch(
			/<ENUM-VALUE [^>]*LONG-NAME="analysis"><PROPERTIES><EMBEDDED-VALUE KEY="0" OTHER-CONTENT=""\/>/
		);
		// Class SpecRelation (clause 10.7, from memory): SOURCE and TARGET reference SPEC-OBJECTs.
		expect(text).toContain(
			'<SOURCE><SPEC-OBJECT-REF>lw-req-T-002</SPEC-OBJECT-REF></SOURCE><TARGET><SPEC-OBJECT-REF>lw-req-T-001</SPEC-OBJECT-REF></TARGET>'
		);
		// Class SpecHierarchy (clause 10.9, from memory): the tree nests T-002 under T-001.
		expect(text).toMatch(
			/<SPEC-HIERARCHY IDENTIFIER="lw-h-lw-req-T-001"[^>]*><CHILDREN><SPEC-HIERARCHY IDENTIFIER="lw-h-lw-req-T-002"/
		);
		// Class AttributeValueXHTML (clause 10.8, from memory): THE-VALUE holds XHTML in its namespace.
		expect(text).toContain(
			'<THE-VALUE><xhtml:div><xhtml:p>The loop shall be stable.</xhtml:p></xhtml:div></THE-VALUE>'
		);
		// An unbounded sector is xsd:double INF (XML Schema Part 2, 3.2.5).
		expect(text).toMatch(/THE-VALUE="INF"><DEFINITION><ATTRIBUTE-DEFINITION-REAL-REF>lw-ad-sector-upper</);
	});

	it('gives the same bytes for the same content; only CREATION-TIME differs', () => {
		const again = reqifText(doc(), '2027-01-01T00:00:00.000Z');
		expect(again).not.toBe(text);
		expect(again.replace(/<CREATION-TIME>[^<]*</, '<CREATION-TIME><')).toBe(
			text.replace(/<CREATION-TIME>[^<]*</, '<CREATION-TIME><')
		);
	});

	it('reads back every value it wrote', () => {
		const f = parseReqif(text);
		const { records, problems } = reqifRecords(f, reqifMappingFor(f));
		expect(problems).toEqual([]);
		expect(records[0].values).toEqual({
			identifier: 'T-001',
			revision: 3,
			title: 'System <loop> & "pitch"',
			statement: 'The loop shall be stable.',
			rationale: 'Line one\nline two\ttabbed',
			level: 'system',
			assuranceLevel: 'B',
			methods: ['analysis', 'test'],
			status: 'in-review',
			criterion: 'circle',
			sectorLower: 0.5,
			sectorUpper: Infinity,
			requiredMargin: 0.2,
			operatingPoints: ['hover, 20 C', 'cruise'],
			modelName: 'Pitch plant',
			modelVersion: 2,
			modelHash: 'a'.repeat(64)
		});
		expect(records[1].parentKeys).toEqual(['lw-req-T-001']);
		expect(records[1].lastChange).toBe('2026-11-02T10:00:00.000Z');
	});

	it('every review state the product has writes a valid file', () => {
		// One list of states (src/lib/requirements/vocabulary.ts) is the Status enumeration; a state
		// must not reference a literal the file does not define (OMG ReqIF 1.2: ENUM-VALUE-REF names an
		// ENUM-VALUE of the attribute's DATATYPE-DEFINITION-ENUMERATION).
		for (const status of STATUSES) {
			const d = doc();
			d.requirements[1].status = status;
			const t = reqifText(d, '2026-12-02T10:00:00.000Z');
			expect(validate(t), status).toMatchObject({ status: 0 });
			const f = parseReqif(t);
			const { records, problems } = reqifRecords(f, reqifMappingFor(f));
			expect(problems).toEqual([]);
			expect(records[1].values.status).toBe(status);
		}
	});

	it('keeps plain text exactly: paragraphs, line breaks, runs of spaces, ends, tabs, CR', () => {
		for (const s of [
			'a  b',
			' leading and trailing ',
			'one\ntwo',
			'p1\n\np2',
			'p1\n\n\np2',
			'p1\n\n\n\np2',
			'line \n next',
			'tab\there',
			'crlf\r\nline',
			'<b>not markup</b> & &amp; stays',
			'x\n',
			'∞ and µ and 😀'
		]) {
			const f = parseReqif(reqifText(doc(s), '2026-12-02T10:00:00.000Z'));
			expect(reqifRecords(f, reqifMappingFor(f)).records[0].values.statement).toBe(s);
		}
	});
});

describe('reading a hand-written ReqIF file (tests/reqif/handwritten.reqif)', () => {
	const text = readFileSync(resolve('tests/reqif/handwritten.reqif'), 'utf8');

	it('is valid against the schema', () => {
		expect(validate(text)).toMatchObject({ status: 0 });
	});

	const file = parseReqif(text);
	const mapping = reqifMappingFor(file);
	const { records, problems, skipped } = reqifRecords(file, mapping);
	const byId = Object.fromEntries(records.map((r) => [r.key, r]));

	it('reads the header, the three spec-object types and both relation types', () => {
		expect(file.header).toEqual({
			title: 'Pitch axis specification',
			creationTime: '2026-11-30T09:15:00+01:00',
			sourceToolId: 'hand-written',
			comment: 'Supplier drop 3'
		});
		expect(file.objectTypes.map((t) => t.longName)).toEqual([
			'Heading',
			'Supplier requirement',
			'Review note'
		]);
		expect(file.relationTypes.map((t) => t.longName)).toEqual(['Refines', 'See also']);
	});

	it('maps by attribute name: requirements are the type with a text; headings and notes are left out', () => {
		expect(mapping.types['Supplier requirement']).toEqual({
			import: true,
			attributes: {
				'ReqIF.ForeignID': 'identifier',
				'ReqIF.Name': 'title',
				'ReqIF.Text': 'statement',
				Justification: 'rationale',
				DAL: 'assuranceLevel',
				'Verification method': 'methods',
				'Requirement level': 'level'
			}
		});
		expect(mapping.types.Heading.import).toBe(false);
		expect(mapping.types['Review note'].import).toBe(false);
		expect(mapping.relationTypes).toEqual({ Refines: true, 'See also': false });
		expect(skipped).toBe(2);
		expect(problems).toEqual([]);
		expect(records.map((r) => r.key)).toEqual(['so-r1', 'so-r2', 'so-r3']);
	});

	it('reads every value of SUP-100 (XHTML paragraph with inline markup and a list)', () => {
		expect(byId['so-r1'].values).toEqual({
			identifier: 'SUP-100',
			title: 'Pitch loop stability & margins',
			statement:
				'The pitch loop shall remain absolutely stable in every flight mode:\n\n- hover\n- transition\n- cruise',
			rationale: 'Customer clause 4.2.\nSecond line.',
			assuranceLevel: 'A',
			methods: ['Analysis', 'Test'],
			level: 'System'
		});
		expect(byId['so-r1'].parentKeys).toEqual([]);
		expect(byId['so-r1'].lastChange).toBe('2026-11-03T10:30:00Z');
	});

	it('reads every value of SUP-110 (a table), nested under SUP-100', () => {
		expect(byId['so-r2'].values).toEqual({
			identifier: 'SUP-110',
			title: 'Actuator gain range',
			statement:
				'The elevon actuator gain shall lie in the bounds below.\n\nMode | Lower | Upper\nhover | 0.5 | 1.8\ncruise | 0.6 | 1.5',
			assuranceLevel: 'B',
			methods: ['Inspection'],
			level: 'Sub-system'
		});
		expect(byId['so-r2'].parentKeys).toEqual(['so-r1']);
	});

	it('reads every value of SUP-111 (ordered list with a nested list, a line break, character references)', () => {
		expect(byId['so-r3'].values).toEqual({
			identifier: 'SUP-111',
			title: 'Hover loop sector',
			statement:
				'In hover the loop shall pass:\n\n1. the circle criterion on [0.5, 1.8];\n  - at every operating point\n2. a gain margin of 6\u00a0dB\nand a phase margin of 45°.',
			assuranceLevel: 'C',
			methods: ['Analysis'],
			level: 'Loop'
		});
		// The "Refines" relation and the hierarchy (three levels deep) both make it derived.
		expect(byId['so-r3'].parentKeys).toEqual(['so-r1', 'so-r2']);
	});

	it('enumeration names match ours without regard to case and dashes', () => {
		expect(matchEnum('Sub-system', ['system', 'subsystem', 'loop'])).toBe('subsystem');
		expect(matchEnum('Analysis', ['analysis', 'test'])).toBe('analysis');
		expect(matchEnum('Review', ['analysis', 'test'])).toBeNull();
	});
});

describe('problems in a file', () => {
	const base = readFileSync(resolve('tests/reqif/handwritten.reqif'), 'utf8');

	it('an enumeration value the file does not define is named with its object', () => {
		const f = parseReqif(
			base.replace('<ENUM-VALUE-REF>dal-b</ENUM-VALUE-REF>', '<ENUM-VALUE-REF>dal-x</ENUM-VALUE-REF>')
		);
		expect(reqifRecords(f, reqifMappingFor(f)).problems).toEqual([
			{
				objectId: 'so-r2',
				field: 'assuranceLevel',
				message: "DAL: the enumeration value dal-x is not defined in the file's DATATYPES."
			}
		]);
	});

	it('a relation to an object that is not in the file is named with the relation', () => {
		const f = parseReqif(
			base.replace(
				'<TARGET><SPEC-OBJECT-REF>so-r1</SPEC-OBJECT-REF>',
				'<TARGET><SPEC-OBJECT-REF>so-r9</SPEC-OBJECT-REF>'
			)
		);
		expect(reqifRecords(f, reqifMappingFor(f)).problems).toEqual([
			{ objectId: 'rel-1', message: "The relation's TARGET is so-r9, which is not an object of this file." }
		]);
	});

	it('not XML: the error names the line and column', () => {
		let err: unknown;
		try {
			parseReqif('<REQ-IF>\n  <THE-HEADER>\n</REQ-IF>');
		} catch (e) {
			err = e;
		}
		expect(err).toBeInstanceOf(ReqifFormatError);
		expect(err).toMatchObject({ kind: 'not-xml', where: 'line 3, column 1' });
	});

	it('XML that is not ReqIF: the root element, or the namespace, is named', () => {
		expect(() => parseReqif('<?xml version="1.0"?><workbook><sheet/></workbook>')).toThrow(
			'The file is XML but not ReqIF: its root element is <workbook>, not <REQ-IF>.'
		);
		expect(() => parseReqif('<REQ-IF xmlns="urn:other"><THE-HEADER/></REQ-IF>')).toThrow(
			/not in the ReqIF 1.2 namespace/
		);
	});
});

describe('XHTML to text', () => {
	it('headings and paragraphs are blocks; a bare text run is one too', () => {
		expect(
			xhtmlToText('<div xmlns="http://www.w3.org/1999/xhtml"><h2>Scope</h2>Text <em>here</em>.</div>')
		).toBe('Scope\n\nText here.');
	});
});

describe('spreadsheet rows', () => {
	it('a cell that cannot be read is named by row and column', () => {
		const rows = [
			[
				'Identifier',
				'Title',
				'Statement',
				'Sector lower bound',
				'Sector upper bound',
				'Required sector margin (%)'
			],
			['', 'A', 'The loop shall hold.', '0.5', 'inf', '20 %'],
			['', 'B', 'The loop shall hold.', 'half', '1,8', ''],
			['X-1', 'C', 'S', '', '', ''],
			['X-1', 'D', 'S', '', '', '']
		];
		const mapping = {
			headerRow: 1,
			columns: {
				identifier: 'Identifier',
				title: 'Title',
				statement: 'Statement',
				sectorLower: 'Sector lower bound',
				sectorUpper: 'Sector upper bound',
				requiredMargin: 'Required sector margin (%)'
			},
			defaults: {}
		};
		const { records, problems } = sheetRecords(rows, mapping);
		expect(records[0].values).toEqual({
			title: 'A',
			statement: 'The loop shall hold.',
			sectorLower: 0.5,
			sectorUpper: Infinity,
			requiredMargin: 0.2
		});
		expect(records[1].values.sectorUpper).toBe(1.8);
		expect(problems).toEqual([
			{
				row: 3,
				column: 'D (Sector lower bound)',
				field: 'sectorLower',
				message: 'Sector lower bound: "half" is not a number.'
			},
			{
				row: 5,
				column: 'A (Identifier)',
				field: 'identifier',
				identifier: 'X-1',
				message: 'The identifier X-1 is used again (first in row 4).'
			}
		]);
	});
});
