import ExcelJS from 'exceljs';
import { PassThrough, Readable, type Writable } from 'node:stream';
import { CAUTION_TEXT, CAUTION_TITLE } from '../../caution';
import {
	ANALYSIS_LOOK,
	COMBINED_LOOK,
	HOW_LABELS,
	LEVEL_LABELS,
	ROLL_UP_RULE,
	VERDICT_LOOK
} from '../../verification/index';
import { CSV_BOM, csvLine } from './csv';
import type { MatrixBlocker, MatrixRow, Snapshot, SnapshotRequirement } from './service';

// The spreadsheet and CSV exports of a snapshot (the current state or a baseline's manifest). The
// workbook is written with exceljs's streaming writer straight into the response: rows are committed
// as they are written, so memory holds the snapshot, not the workbook.

export interface Cover {
	exportedAt: Date;
	exportedBy: string;
	baseline: {
		number: number;
		label: string;
		manifestHash: string;
		frozenAt: string;
		frozenBy: string;
	} | null;
	filters?: string;
}

type Cell = string | number | null;
interface SheetColumn<T> {
	header: string;
	width: number;
	value: (row: T) => Cell;
}

export function verdictWords(status: string | null | undefined, verdict: string | null | undefined): string {
	if (status === 'error') return ANALYSIS_LOOK.error.label.toLowerCase();
	return VERDICT_LOOK[verdict ?? '']?.label ?? '';
}

// A manifest frozen before the one verification state (loopwarden-snapshot/1) has neither a label nor
// blockers: its raw state name and open items are written as they were frozen.
type Frozen = MatrixRow & { openItems?: string[] };
export const stateWords = (r: MatrixRow) =>
	`${r.stateSymbol ?? COMBINED_LOOK[r.state]?.symbol ?? ''} ${r.stateLabel ?? COMBINED_LOOK[r.state]?.label ?? r.state}`.trim();
const blockersOf = (r: Frozen): MatrixBlocker[] =>
	r.blockers ?? (r.openItems ?? []).map((k) => ({ kind: k as MatrixBlocker['kind'], text: k, ref: null }));
export const blockerWords = (r: MatrixRow) =>
	blockersOf(r)
		.map((b) => b.text)
		.join(' ');
const finite = (x: number | null | undefined): Cell =>
	x === null || x === undefined || !Number.isFinite(x) ? (x === Infinity ? 'infinity' : null) : x;

export const MATRIX_COLUMNS: SheetColumn<MatrixRow>[] = [
	{ header: 'Identifier', width: 16, value: (r) => r.identifier },
	{ header: 'Title', width: 40, value: (r) => r.title },
	{ header: 'Level', width: 11, value: (r) => LEVEL_LABELS[r.level] ?? r.level },
	{ header: 'Assurance level', width: 10, value: (r) => r.assuranceLevel },
	{ header: 'Status', width: 11, value: (r) => r.status },
	{ header: 'Verification methods', width: 22, value: (r) => r.methods.join(', ') },
	{ header: 'Owner', width: 18, value: (r) => r.owner?.name ?? '' },
	{ header: 'Derived from', width: 18, value: (r) => r.parents.join(', ') },
	{ header: 'Derived requirements', width: 22, value: (r) => r.children.join(', ') },
	{ header: 'Model', width: 22, value: (r) => r.model?.name ?? '' },
	{ header: 'Model version', width: 9, value: (r) => r.model?.version ?? null },
	{ header: 'Model SHA-256', width: 20, value: (r) => r.model?.hash ?? '' },
	{ header: 'State', width: 30, value: stateWords },
	{ header: 'Verified how', width: 24, value: (r) => (r.how ? HOW_LABELS[r.how] : '') },
	{
		header: 'Analysis state',
		width: 20,
		value: (r) => ANALYSIS_LOOK[r.analysisState]?.label ?? r.analysisState
	},
	{
		header: 'Latest verdict',
		width: 16,
		value: (r) => verdictWords(r.latestRun?.status, r.latestRun?.verdict)
	},
	{ header: 'Proved', width: 11, value: (r) => finite(r.latestRun?.numbers.proved) },
	{ header: 'Required', width: 11, value: (r) => finite(r.latestRun?.numbers.required) },
	{ header: 'Numbers', width: 44, value: (r) => r.latestRun?.numbers.text ?? '' },
	{ header: 'Evidence', width: 9, value: (r) => r.evidence.count },
	{ header: 'Accepted evidence', width: 10, value: (r) => r.evidence.accepted },
	{ header: 'Blockers', width: 60, value: blockerWords },
	{ header: 'Last change (UTC)', width: 24, value: (r) => r.lastChange }
];

const REQUIREMENT_COLUMNS: SheetColumn<SnapshotRequirement>[] = [
	{ header: 'Identifier', width: 16, value: (r) => r.identifier },
	{ header: 'Revision', width: 9, value: (r) => r.revision },
	{ header: 'Title', width: 40, value: (r) => r.title },
	{ header: 'Statement', width: 80, value: (r) => r.statement },
	{ header: 'Rationale', width: 60, value: (r) => r.rationale },
	{ header: 'Level', width: 11, value: (r) => LEVEL_LABELS[r.level] ?? r.level },
	{ header: 'Assurance level', width: 10, value: (r) => r.assuranceLevel },
	{ header: 'Verification methods', width: 22, value: (r) => r.methods.join(', ') },
	{ header: 'Status', width: 11, value: (r) => r.status },
	{ header: 'Owner', width: 18, value: (r) => r.owner?.name ?? '' },
	{ header: 'Specification', width: 36, value: (r) => (r.spec ? `v${r.spec.version}: ${r.spec.check}` : '') },
	{ header: 'Revision SHA-256', width: 20, value: (r) => r.contentHash }
];

type AnalysisLine = SnapshotRequirement & { latestRun: NonNullable<SnapshotRequirement['latestRun']> };
const ANALYSIS_COLUMNS: SheetColumn<AnalysisLine>[] = [
	{ header: 'Identifier', width: 16, value: (r) => r.identifier },
	{ header: 'Run', width: 8, value: (r) => r.latestRun.id },
	{ header: 'Requirement revision', width: 10, value: (r) => r.latestRun.requirementRevision },
	{ header: 'Model', width: 22, value: (r) => r.model?.name ?? '' },
	{ header: 'Model version', width: 9, value: (r) => r.latestRun.modelVersion },
	{ header: 'Model SHA-256', width: 20, value: (r) => r.latestRun.modelHash },
	{ header: 'Engine version', width: 10, value: (r) => r.latestRun.engineVersion },
	{ header: 'Specification', width: 36, value: (r) => `v${r.latestRun.specVersion}: ${r.latestRun.check}` },
	{ header: 'Verdict', width: 16, value: (r) => verdictWords(r.latestRun.status, r.latestRun.verdict) },
	{ header: 'Proved', width: 11, value: (r) => finite(r.latestRun.numbers.proved) },
	{ header: 'Required', width: 11, value: (r) => finite(r.latestRun.numbers.required) },
	{ header: 'Numbers', width: 44, value: (r) => r.latestRun.numbers.text },
	{ header: 'Worst operating point', width: 22, value: (r) => r.latestRun.worstPoint ?? '' },
	{ header: 'Finished (UTC)', width: 24, value: (r) => r.latestRun.finishedAt ?? '' },
	{ header: 'Inputs current', width: 9, value: (r) => (r.latestRun.stale ? 'no (re-run due)' : 'yes') },
	{ header: 'Output SHA-256', width: 20, value: (r) => r.latestRun.outputHash ?? '' }
];

type EvidenceLine = Snapshot['evidence'][number];
const EVIDENCE_COLUMNS: SheetColumn<EvidenceLine>[] = [
	{ header: 'Evidence', width: 9, value: (e) => e.evidenceId },
	{ header: 'Revision', width: 9, value: (e) => e.revision },
	{ header: 'Title', width: 36, value: (e) => e.title },
	{ header: 'Kind', width: 18, value: (e) => e.kind },
	{ header: 'Method', width: 13, value: (e) => e.method },
	{ header: 'File', width: 30, value: (e) => e.file },
	{ header: 'Size (bytes)', width: 12, value: (e) => e.sizeBytes },
	{ header: 'SHA-256', width: 20, value: (e) => e.sha256 },
	{ header: 'Uploaded by', width: 20, value: (e) => e.uploadedBy },
	{ header: 'Uploaded (UTC)', width: 24, value: (e) => e.uploadedAt },
	{ header: 'Review decision', width: 16, value: (e) => e.review?.decision ?? 'awaiting review' },
	{ header: 'Reviewer', width: 20, value: (e) => e.review?.reviewer ?? '' },
	{ header: 'Reviewed (UTC)', width: 24, value: (e) => e.review?.reviewedAt ?? '' },
	{ header: 'Review comment', width: 40, value: (e) => e.review?.comment ?? '' },
	{ header: 'Verifies', width: 24, value: (e) => e.requirements.join(', ') }
];

interface OpenLine {
	r: MatrixRow;
	item: MatrixBlocker;
}
const OPEN_COLUMNS: SheetColumn<OpenLine>[] = [
	{ header: 'Identifier', width: 16, value: (o) => o.r.identifier },
	{ header: 'Title', width: 40, value: (o) => o.r.title },
	{ header: 'Open item', width: 60, value: (o) => o.item.text },
	{ header: 'Points at', width: 16, value: (o) => o.item.ref?.identifier ?? '' },
	{ header: 'State', width: 30, value: (o) => stateWords(o.r) },
	{ header: 'Owner', width: 18, value: (o) => o.r.owner?.name ?? '' }
];

export const SHEET_NAMES = [
	'Cover',
	'Trace matrix',
	'Requirements',
	'Analyses',
	'Evidence',
	'Open items'
] as const;

async function table<T>(
	wb: ExcelJS.stream.xlsx.WorkbookWriter,
	name: string,
	columns: SheetColumn<T>[],
	rows: Iterable<T> | AsyncIterable<T>
) {
	const ws = wb.addWorksheet(name, { views: [{ state: 'frozen', ySplit: 1 }] });
	ws.columns = columns.map((c) => ({ header: c.header, width: c.width }));
	ws.autoFilter = { from: { row: 1, column: 1 }, to: { row: 1, column: columns.length } };
	// The header row is written by the columns setter; commit it, then every data row as it is added.
	ws.getRow(1).commit();
	let n = 0;
	for await (const r of rows) {
		ws.addRow(columns.map((c) => c.value(r))).commit();
		// addRow is synchronous: let the zip stream compress and drain what was written, so memory holds
		// a few hundred rows of XML rather than a whole sheet.
		if (++n % 250 === 0) await new Promise((resolve) => setImmediate(resolve));
	}
	ws.commit();
}

async function* openLines(rows: AsyncIterable<MatrixRow>): AsyncGenerator<OpenLine> {
	for await (const r of rows) for (const item of blockersOf(r)) yield { r, item };
}

async function* analysisLines(rows: AsyncIterable<SnapshotRequirement>): AsyncGenerator<AnalysisLine> {
	for await (const r of rows) if (r.latestRun !== null) yield r as AnalysisLine;
}

/**
 * What a workbook is written from: a snapshot read from cursors (trace/service.ts openSnapshot; each
 * call of requirements() is a new pass) or a stored one (a baseline's manifest, see sourceOf).
 */
export interface WorkbookSource {
	project: Snapshot['project'];
	engineVersion: string;
	total: number;
	requirements(): AsyncIterable<SnapshotRequirement>;
	evidence(): AsyncIterable<Snapshot['evidence'][number]>;
}

/** A stored snapshot as a workbook source. */
export function sourceOf(snap: Snapshot): WorkbookSource {
	async function* each<T>(list: T[]) {
		yield* list;
	}
	return {
		project: snap.project,
		engineVersion: snap.engineVersion,
		total: snap.requirements.length,
		requirements: () => each(snap.requirements),
		evidence: () => each(snap.evidence)
	};
}

/**
 * Write the workbook into a stream; resolves when the last byte is written. Each sheet is one pass over
 * its rows (exceljs's streaming writer zips the sheets one after another, so sheets written side by
 * side would be buffered whole): the cover first, then matrix, requirements, analyses, evidence, open
 * items.
 */
export async function writeWorkbook(snap: WorkbookSource, cover: Cover, out: Writable): Promise<void> {
	const wb = new ExcelJS.stream.xlsx.WorkbookWriter({
		stream: out,
		// No cell styles: they cost about a third of the export time on 10,000 rows. The header stays
		// apart by the frozen pane and its auto-filter buttons.
		useStyles: false,
		useSharedStrings: false
	});
	wb.creator = 'Loopwarden';
	wb.created = cover.exportedAt;

	const ws = wb.addWorksheet('Cover');
	ws.columns = [
		{ header: 'Item', width: 22 },
		{ header: 'Value', width: 100 }
	];
	const lines: [string, string | number][] = [
		['Project', `${snap.project.key} ${snap.project.name}`],
		['Exported (UTC)', cover.exportedAt.toISOString()],
		['Exported by', cover.exportedBy],
		[
			'Baseline',
			cover.baseline
				? `#${cover.baseline.number} ${cover.baseline.label}`
				: 'none: the current state of the project'
		],
		...(cover.baseline
			? ([
					['Baseline frozen (UTC)', cover.baseline.frozenAt],
					['Baseline frozen by', cover.baseline.frozenBy],
					['Manifest SHA-256', cover.baseline.manifestHash]
				] as [string, string][])
			: []),
		['Filters', cover.filters || 'none (every requirement)'],
		['Engine version', snap.engineVersion],
		['Requirements', snap.total],
		['Caution', CAUTION_TITLE],
		['', CAUTION_TEXT],
		...ROLL_UP_RULE.map((line, i) => [i === 0 ? 'Verification rule' : '', line] as [string, string])
	];
	for (const l of lines) {
		ws.addRow(l).commit();
	}
	ws.commit();

	await table(wb, 'Trace matrix', MATRIX_COLUMNS, snap.requirements());
	await table(wb, 'Requirements', REQUIREMENT_COLUMNS, snap.requirements());
	await table(wb, 'Analyses', ANALYSIS_COLUMNS, analysisLines(snap.requirements()));
	await table(wb, 'Evidence', EVIDENCE_COLUMNS, snap.evidence());
	await table(wb, 'Open items', OPEN_COLUMNS, openLines(snap.requirements()));
	await wb.commit();
}

/**
 * A web stream of the workbook, for a Response body. Errors end the stream (the client sees a cut
 * file); `done` runs when the stream ended either way (a cursor snapshot's close).
 */
export function workbookStream(
	snap: WorkbookSource | Snapshot,
	cover: Cover,
	done?: () => Promise<void>
): ReadableStream<Uint8Array> {
	const pass = new PassThrough();
	const source = 'format' in snap ? sourceOf(snap) : snap;
	writeWorkbook(source, cover, pass)
		.catch((e) => {
			console.error('[trace] workbook export failed:', e);
			pass.destroy(e as Error);
		})
		.finally(() => done?.().catch((e) => console.error('[trace] closing the export snapshot:', e)));
	return Readable.toWeb(pass) as ReadableStream<Uint8Array>;
}

/** The matrix sheet as CSV (./csv.ts: byte-order mark, RFC 4180, formula guard), streamed row by row. */
export function csvStream(rows: MatrixRow[]): ReadableStream<Uint8Array> {
	const enc = new TextEncoder();
	let i = -1;
	return new ReadableStream({
		pull(controller) {
			const chunk: string[] = [];
			if (i === -1) {
				chunk.push(CSV_BOM + csvLine(MATRIX_COLUMNS.map((c) => c.header)));
				i = 0;
			}
			const end = Math.min(rows.length, i + 500);
			for (; i < end; i++) chunk.push(csvLine(MATRIX_COLUMNS.map((c) => c.value(rows[i]))));
			controller.enqueue(enc.encode(chunk.join('')));
			if (i >= rows.length) controller.close();
		}
	});
}

/** Rows as JSON lines (one object per line), streamed in chunks. */
export function jsonLinesStream(rows: unknown[], head?: unknown): ReadableStream<Uint8Array> {
	const enc = new TextEncoder();
	let i = head === undefined ? 0 : -1;
	return new ReadableStream({
		pull(controller) {
			if (i === -1) {
				controller.enqueue(enc.encode(JSON.stringify(head) + '\n'));
				i = 0;
				return;
			}
			const end = Math.min(rows.length, i + 250);
			const parts: string[] = [];
			for (; i < end; i++) parts.push(JSON.stringify(rows[i]));
			if (parts.length) controller.enqueue(enc.encode(parts.join('\n') + '\n'));
			if (i >= rows.length) controller.close();
		}
	});
}
