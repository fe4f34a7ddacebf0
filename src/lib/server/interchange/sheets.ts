import ExcelJS from 'exceljs';
import Papa from 'papaparse';
import { FIELD_NAMES, type ImportField } from '../../requirements/interchange';
import { ServiceError } from '../errors';

// Spreadsheets as rows of text: XLSX through exceljs, CSV through papaparse. The mapping of columns
// onto fields is pure (src/lib/requirements/interchange.ts sheetRecords).

export interface Sheet {
	name: string;
	rows: string[][];
}

function cellText(v: ExcelJS.CellValue): string {
	if (v == null) return '';
	if (typeof v === 'object') {
		if (v instanceof Date) return v.toISOString();
		if ('richText' in v) return v.richText.map((t) => t.text).join('');
		if ('result' in v) return cellText((v as ExcelJS.CellFormulaValue).result as ExcelJS.CellValue);
		if ('text' in v) return String((v as ExcelJS.CellHyperlinkValue).text);
		if ('error' in v) return '';
	}
	return String(v);
}

export async function readXlsx(bytes: Buffer): Promise<Sheet[]> {
	const wb = new ExcelJS.Workbook();
	try {
		await wb.xlsx.load(bytes as unknown as ArrayBuffer);
	} catch (e) {
		throw new ServiceError(
			422,
			`The file is not an XLSX workbook that can be read: ${(e as Error).message}`,
			{
				file: 'Not a readable XLSX workbook.'
			}
		);
	}
	const out: Sheet[] = [];
	wb.eachSheet((ws) => {
		const rows: string[][] = [];
		ws.eachRow({ includeEmpty: true }, (row, n) => {
			const cells: string[] = [];
			row.eachCell({ includeEmpty: true }, (cell, c) => {
				cells[c - 1] = cellText(cell.value);
			});
			rows[n - 1] = Array.from(cells, (x) => x ?? '');
		});
		out.push({ name: ws.name, rows: Array.from(rows, (r) => r ?? []) });
	});
	return out;
}

export function readCsv(text: string): Sheet[] {
	const r = Papa.parse<string[]>(text.replace(/^\uFEFF/, ''), { skipEmptyLines: false });
	const bad = r.errors.find((e) => e.type !== 'Delimiter');
	if (bad) {
		throw new ServiceError(422, `The CSV cannot be read at row ${(bad.row ?? 0) + 1}: ${bad.message}`, {
			file: `Row ${(bad.row ?? 0) + 1}: ${bad.message}`
		});
	}
	return [{ name: 'CSV', rows: r.data }];
}

/** The template workbook: one sheet with our column names, one example row, and a sheet of notes. */
export async function templateWorkbook(): Promise<Buffer> {
	const wb = new ExcelJS.Workbook();
	const ws = wb.addWorksheet('Requirements');
	const cols: ImportField[] = [
		'identifier',
		'title',
		'statement',
		'parentIdentifier',
		'level',
		'assuranceLevel',
		'methods',
		'criterion',
		'sectorLower',
		'sectorUpper',
		'requiredMargin',
		'modelName'
	];
	ws.addRow(cols.map((c) => (c === 'requiredMargin' ? `${FIELD_NAMES[c]} (%)` : FIELD_NAMES[c])));
	ws.addRow([
		'',
		'Pitch loop absolute stability',
		'The pitch loop shall be absolutely stable for every actuator gain in the sector [0.5, 1.8].',
		'',
		'loop',
		'B',
		'analysis, test',
		'circle',
		0.5,
		1.8,
		20,
		'Pitch plant'
	]);
	ws.getRow(1).font = { bold: true };
	ws.columns.forEach((c) => (c.width = 22));
	const notes = wb.addWorksheet('Notes');
	for (const line of [
		'One requirement per row. Leave Identifier empty for a new requirement; a known identifier updates that requirement (a new revision).',
		'Parent identifier: the requirement this one is derived from (several: separated by commas).',
		'Level: system, subsystem or loop. Assurance level: A to E. Verification methods: analysis, test, inspection, demonstration (comma separated).',
		'Criterion: circle or popov (circle when empty). Sector upper bound: a number, or inf for an unbounded sector.',
		'Required sector margin (%): how far the proved upper bound must exceed the upper bound, in percent.',
		'Model: the name of a model of the project; its latest version is used.'
	])
		notes.addRow([line]);
	notes.getColumn(1).width = 140;
	return Buffer.from(await wb.xlsx.writeBuffer());
}
