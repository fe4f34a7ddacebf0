import { createRequire } from 'node:module';
import PDFDocument from 'pdfkit';
import { CAUTION_TEXT, CAUTION_TITLE } from '../../caution';
import { nyquistPicture, popovPicture, type StoredRun } from '../../components/plots/verdict-picture';
import { frequencyText } from '../../verification/decision';
import {
	ANALYSIS_LOOK,
	COMBINED_LOOK,
	COMBINED_STATES,
	CAUSE_LABELS,
	FINDING_LOOK,
	FINDING_STATES,
	HOW_LABELS,
	OPEN_FINDING_STATES,
	HOW_VERIFIED,
	LEVEL_LABELS,
	ROLL_UP_RULE,
	VERDICT_LOOK
} from '../../verification/index';
import { METHOD_SOURCES } from '../../verification/method-sources';
import { canonical } from '../audit';
import { coverageOf } from '../coverage/service';
import { MATRIX_COLUMNS, blockerWords, stateWords, verdictWords } from '../trace/export';
import { fmt, type SnapshotRequirement } from '../trace/service';
import type { PackageContent } from './content';
import { SIGNOFF_SOURCES, type SignedRecord } from './signoff';
import { drawNyquist, drawPopov, nyquistCaption, popovCaption } from './pdf-plots';

// The data package's report (PDF, pdfkit). A document an authority can read without the app: cover,
// contents with page numbers, summary, trace matrix, one section per requirement, appendix. Each part
// is its own section builder (REPORT_SECTIONS, REQUIREMENT_PARTS). A part prints only what the manifest
// and the stored rows hold; nothing is filled in. The sign-off records (signatures, review approvals,
// findings, the release) say where each comes from: frozen in the manifest, or read at package time.
//
// Pages are buffered (pdfkit bufferPages) so that, once every section is laid out, the contents pages
// reserved after the cover get their page numbers and every page its header, footer ("page N of M")
// and, for a draft, its DRAFT mark.

type Doc = InstanceType<typeof PDFDocument>;

const require = createRequire(import.meta.url);
/**
 * Fonts: the app's typefaces, Inter and JetBrains Mono, as static TrueType files from
 * @expo-google-fonts (OFL). The app itself ships them as variable woff2 files (@fontsource-variable),
 * which pdfkit (fontkit 2) cannot embed whole: the Inter Latin subset lacks ω, ∞ and ≥, its bold
 * instance does not load, and subsetting the JetBrains Mono file fails on its composite glyphs.
 */
export const FONT_FILES = {
	sans: require.resolve('@expo-google-fonts/inter/400Regular/Inter_400Regular.ttf'),
	bold: require.resolve('@expo-google-fonts/inter/700Bold/Inter_700Bold.ttf'),
	mono: require.resolve('@expo-google-fonts/jetbrains-mono/400Regular/JetBrainsMono_400Regular.ttf')
};

/**
 * OpenType shaping off: the report's text is plain Latin (and a few Greek and mathematical signs) that
 * needs no contextual alternates or ligatures, and fontkit's shaping of Inter's feature tables was most
 * of the report's time. Kerning stays.
 */
const PLAIN_TEXT = {
	calt: false,
	clig: false,
	liga: false,
	rlig: false,
	rclt: false,
	ccmp: false,
	locl: false,
	mark: false,
	mkmk: false,
	curs: false
};

/**
 * What the two passes of one report share, so the writing pass does not measure again what the layout
 * pass measured: pdfkit's per-word glyph layouts of each font (its `layoutCache`; a word lays out the
 * same in both documents of the same font file) and the heights of wrapped strings (wrappedHeight).
 */
interface Measures {
	words: Record<string, Record<string, unknown>>;
	heights: Map<string, number>;
}
const newMeasures = (): Measures => ({ words: {}, heights: new Map() });
const MEASURES = new WeakMap<Doc, Measures>();

/**
 * Lay out the registered fonts' text without shaping (PLAIN_TEXT): the option is set on the fontkit
 * fonts themselves, because pdfkit's per-word layout cache is bypassed when a text call passes features.
 * Each font's word cache is the shared one of `measures`.
 */
function plainText(doc: Doc, names: string[], measures: Measures) {
	for (const name of names) {
		doc.font(name);
		const embedded = (
			doc as unknown as {
				_font: { layoutCache?: Record<string, unknown>; font: { layout: (...a: unknown[]) => unknown } };
			}
		)._font;
		const font = embedded.font;
		const layout = font.layout.bind(font);
		font.layout = (text: unknown, features: unknown, ...rest: unknown[]) =>
			layout(text, features ?? PLAIN_TEXT, ...rest);
		if (embedded.layoutCache) embedded.layoutCache = measures.words[name] ??= embedded.layoutCache;
	}
	MEASURES.set(doc, measures);
}

/** The height of `text` wrapped at `width` in `font` at `size`, measured once per report. */
function wrappedHeight(doc: Doc, font: string, size: number, text: string, width: number): number {
	const cache = MEASURES.get(doc)?.heights;
	const key = `${font}|${size}|${width}|${text}`;
	const hit = cache?.get(key);
	if (hit !== undefined) return hit;
	const h = doc.font(font).fontSize(size).heightOfString(text, { width });
	cache?.set(key, h);
	return h;
}

const PAGE = { width: 595.28, height: 841.89 };
const MARGIN = { top: 62, bottom: 58, left: 50, right: 50 };
const WIDTH = PAGE.width - MARGIN.left - MARGIN.right;
const INK = '#172a30';
const SOFT = '#4b5d63';
const RULE = '#d9d4c8';

/** Symbols the text face lacks, as ones it has (the words beside them carry the meaning). */
const SYMBOL_FALLBACK: Record<string, string> = {
	'✕': '×',
	'✖': '×',
	'✔': '✓',
	'⊘': 'Ø',
	'◌': '○',
	'◐': '○'
};
const safe = (s: string) => s.replace(/[✕✖✔⊘◌◐]/g, (c) => SYMBOL_FALLBACK[c] ?? '?');

export interface TocEntry {
	title: string;
	level: 0 | 1;
	/** Zero-based page index. */
	page: number;
}

export interface ReportContext {
	doc: Doc;
	c: PackageContent;
	toc: TocEntry[];
	progress: (fraction: number, step: string) => Promise<void>;
	/** The layout pass: only where things go matters (page numbers); plots are not drawn. */
	dry: boolean;
	/** Start a new page, first finishing (running heads) and writing out the pages so far. */
	newPage: () => void;
}

export interface ReportSection {
	id: string;
	render: (ctx: ReportContext) => Promise<void> | void;
}

// ---- text helpers -------------------------------------------------------------------------------

const bottom = (doc: Doc) => doc.page.height - MARGIN.bottom;

/** Start a new page when less than `h` points are left. */
function ensure(doc: Doc, h: number) {
	if (doc.y + h > bottom(doc)) doc.addPage();
}

function heading(ctx: ReportContext, title: string, level: 0 | 1, newPage: boolean) {
	const { doc } = ctx;
	if (newPage) ctx.newPage();
	else ensure(doc, level === 0 ? 90 : 70);
	ctx.toc.push({ title, level, page: doc.bufferedPageRange().start + doc.bufferedPageRange().count - 1 });
	doc.outline.addItem(title);
	doc
		.font('bold')
		.fontSize(level === 0 ? 16 : 12)
		.fillColor(INK)
		.text(safe(title), MARGIN.left, doc.y, { width: WIDTH });
	doc.moveDown(level === 0 ? 0.6 : 0.3);
}

function sub(doc: Doc, title: string) {
	ensure(doc, 40);
	doc.moveDown(0.35);
	doc.font('bold').fontSize(9).fillColor(INK).text(safe(title), MARGIN.left, doc.y, { width: WIDTH });
	doc.moveDown(0.15);
}

function para(doc: Doc, text: string, opts: { size?: number; color?: string; font?: string } = {}) {
	doc
		.font(opts.font ?? 'sans')
		.fontSize(opts.size ?? 9)
		.fillColor(opts.color ?? INK)
		.text(safe(text || '–'), MARGIN.left, doc.y, { width: WIDTH });
}

/** "Label: value" lines; values in the mono face when they are hashes. */
function facts(doc: Doc, rows: [string, string, ('mono' | 'sans')?][]) {
	const lw = 130;
	for (const [label, value, face] of rows) {
		const f = face === 'mono' ? 'mono' : 'sans';
		const h = Math.max(12, wrappedHeight(doc, f, f === 'mono' ? 7.5 : 9, safe(value || '–'), WIDTH - lw) + 2);
		ensure(doc, h);
		const y = doc.y;
		doc
			.font('sans')
			.fontSize(9)
			.fillColor(SOFT)
			.text(safe(label), MARGIN.left, y, { width: lw - 6 });
		doc
			.font(f)
			.fontSize(f === 'mono' ? 7.5 : 9)
			.fillColor(INK)
			.text(safe(value || '–'), MARGIN.left + lw, y + (f === 'mono' ? 1 : 0), { width: WIDTH - lw });
		doc.y = y + h;
	}
}

export interface TableColumn<T> {
	header: string;
	width: number;
	value: (row: T) => string;
	mono?: boolean;
}

/** A table that breaks across pages and repeats its header row on every page it spans. */
export function table<T>(doc: Doc, columns: TableColumn<T>[], rows: Iterable<T>, size = 7) {
	const total = columns.reduce((s, c) => s + c.width, 0);
	const scale = WIDTH / total;
	const widths = columns.map((c) => c.width * scale);
	const pad = 2.5;
	const heightOf = (cells: string[], font: (i: number) => string) =>
		Math.max(...cells.map((s, i) => wrappedHeight(doc, font(i), size, s || ' ', widths[i] - 2 * pad))) +
		2 * pad;
	const drawRow = (cells: string[], font: (i: number) => string, header: boolean) => {
		const h = heightOf(cells, font);
		const y = doc.y;
		if (header) doc.rect(MARGIN.left, y, WIDTH, h).fill('#eef1ef');
		let x = MARGIN.left;
		cells.forEach((s, i) => {
			doc
				.font(font(i))
				.fontSize(size)
				.fillColor(INK)
				.text(s, x + pad, y + pad, { width: widths[i] - 2 * pad });
			x += widths[i];
		});
		doc
			.moveTo(MARGIN.left, y + h)
			.lineTo(MARGIN.left + WIDTH, y + h)
			.lineWidth(header ? 0.8 : 0.4)
			.strokeColor(header ? SOFT : RULE)
			.undash()
			.stroke();
		doc.y = y + h;
	};
	const headerCells = columns.map((c) => safe(c.header));
	const headerFont = () => 'bold';
	const cellFont = (i: number) => (columns[i].mono ? 'mono' : 'sans');
	const headerHeight = heightOf(headerCells, headerFont);
	ensure(doc, headerHeight + 20);
	drawRow(headerCells, headerFont, true);
	for (const r of rows) {
		const cells = columns.map((c) => safe(c.value(r) ?? ''));
		const h = heightOf(cells, cellFont);
		if (doc.y + h > bottom(doc)) {
			doc.addPage();
			drawRow(headerCells, headerFont, true);
		}
		drawRow(cells, cellFont, false);
	}
	doc.x = MARGIN.left;
	doc.moveDown(0.4);
}

const utc = (iso: string | Date | null | undefined) =>
	iso ? new Date(iso).toISOString().replace('T', ' ').slice(0, 19) + ' UTC' : '–';

const stateText = (r: SnapshotRequirement) => safe(stateWords(r));

function num(v: unknown): number | null {
	if (typeof v === 'number') return v;
	if (v === 'Infinity') return Infinity;
	if (v === '-Infinity') return -Infinity;
	return null;
}

// ---- sections -----------------------------------------------------------------------------------

function cover(ctx: ReportContext) {
	const { doc, c } = ctx;
	doc.font('sans').fontSize(10).fillColor(SOFT).text('Loopwarden data package', MARGIN.left, 110);
	doc.moveDown(0.4);
	doc
		.font('bold')
		.fontSize(24)
		.fillColor(INK)
		.text(safe(`${c.project.key} · ${c.project.name}`), { width: WIDTH });
	doc.moveDown(0.3);
	doc
		.font('bold')
		.fontSize(15)
		.text(
			safe(
				c.baseline
					? `Baseline #${c.baseline.number}: ${c.baseline.label}`
					: 'DRAFT: the present state of the project (not a frozen baseline)'
			),
			{ width: WIDTH }
		);
	if (c.baseline?.note) {
		doc.moveDown(0.3);
		para(doc, c.baseline.note, { color: SOFT });
	}
	doc.moveDown(1.2);
	facts(doc, [
		[
			'Baseline',
			c.baseline ? `#${c.baseline.number} ${c.baseline.label}` : 'none (draft of the present state)'
		],
		...(c.baseline
			? ([
					['Frozen', utc(c.baseline.frozenAt)],
					['Frozen by', c.baseline.frozenBy]
				] as [string, string][])
			: []),
		['Manifest SHA-256', c.manifestHash, 'mono'],
		['Engine version', c.engineVersion],
		['Requirements', String(c.manifest.requirements.length)],
		['Generated', utc(c.generatedAt)],
		['Generated by', c.generatedBy],
		['Application version', c.appVersion]
	]);
	doc.moveDown(1.2);
	const y = doc.y;
	doc.font('bold').fontSize(10);
	const textH =
		doc.heightOfString(CAUTION_TITLE, { width: WIDTH - 24 }) +
		doc
			.font('sans')
			.fontSize(9)
			.heightOfString(CAUTION_TEXT, { width: WIDTH - 24 }) +
		18;
	doc.rect(MARGIN.left, y, WIDTH, textH).fill('#fdf6e7');
	doc.rect(MARGIN.left, y, 3, textH).fill('#b7791f');
	doc
		.font('bold')
		.fontSize(10)
		.fillColor('#5a3a06')
		.text(`Caution: ${CAUTION_TITLE}`, MARGIN.left + 14, y + 8, { width: WIDTH - 24 });
	doc
		.font('sans')
		.fontSize(9)
		.text(CAUTION_TEXT, { width: WIDTH - 24 });
	doc.y = y + textH + 14;
	para(
		doc,
		'Loopwarden says "proved" for what its exact algebra decides about the model as entered. It is not a qualified tool (RTCA DO-330); this report is a data package for the applicant’s own assessment. Every file it names is in the accompanying archive with its SHA-256 (SHA256SUMS), so each can be checked without Loopwarden.',
		{ size: 8.5, color: SOFT }
	);
}

/** Lines one contents page holds (the first has the heading), for reserving pages before the sections. */
const TOC_LINE = 13.5;
const tocCapacity = (first: boolean) =>
	Math.floor((PAGE.height - MARGIN.top - MARGIN.bottom - (first ? 40 : 0)) / TOC_LINE);

function contentsPagesFor(entries: number): number {
	let n = 1;
	let room = tocCapacity(true);
	while (room < entries) {
		n++;
		room += tocCapacity(false);
	}
	return n;
}

/** Write contents page `p` (0-based among the contents pages) on the current page. */
function contentsPage(doc: Doc, p: number, toc: TocEntry[]) {
	let y = MARGIN.top;
	if (p === 0) {
		doc.font('bold').fontSize(16).fillColor(INK).text('Contents', MARGIN.left, y);
		y += 40;
	}
	let i = 0;
	for (let k = 0; k < p; k++) i += tocCapacity(k === 0);
	const cap = tocCapacity(p === 0);
	for (let k = 0; k < cap && i < toc.length; k++, i++) {
		const e = toc[i];
		const indent = e.level === 1 ? 16 : 0;
		const pageText = String(e.page + 1);
		doc
			.font(e.level === 0 ? 'bold' : 'sans')
			.fontSize(e.level === 0 ? 9.5 : 8.5)
			.fillColor(INK);
		const room = WIDTH - indent - 40;
		let title = safe(e.title);
		while (doc.widthOfString(title) > room && title.length > 4) title = title.slice(0, -2);
		if (title !== safe(e.title)) title = title.trimEnd() + '…';
		doc.text(title, MARGIN.left + indent, y, { lineBreak: false });
		const tw = doc.widthOfString(title);
		doc
			.moveTo(MARGIN.left + indent + tw + 4, y + 7)
			.lineTo(MARGIN.left + WIDTH - 28, y + 7)
			.dash(1, { space: 2 })
			.lineWidth(0.5)
			.strokeColor(RULE)
			.stroke()
			.undash();
		doc.text(pageText, MARGIN.left + WIDTH - 26, y, { width: 26, align: 'right', lineBreak: false });
		y += TOC_LINE;
	}
}

function countBy(states: Record<string, number>) {
	return COMBINED_STATES.filter((s) => states[s] !== undefined).map((s) => ({
		state: s,
		label: `${safe(COMBINED_LOOK[s].symbol)} ${COMBINED_LOOK[s].label}`,
		n: states[s]
	}));
}

const summary: ReportSection = {
	id: 'summary',
	render(ctx) {
		const { doc, c } = ctx;
		heading(ctx, 'Summary', 0, true);
		const cov = coverageOf(c.manifest.requirements);
		sub(doc, 'Coverage');
		para(
			doc,
			`${cov.total} requirements (retired ones left out), each counted once in its verification state${c.baseline ? ' as frozen' : ''}.`
		);
		doc.moveDown(0.3);
		table(
			doc,
			[
				{ header: 'State', width: 60, value: (s: ReturnType<typeof countBy>[number]) => s.label },
				{ header: 'Requirements', width: 20, value: (s) => String(s.n) },
				{
					header: 'Share',
					width: 20,
					value: (s) => (cov.total ? `${((100 * s.n) / cov.total).toFixed(1)} %` : '–')
				}
			],
			countBy(cov.states),
			8
		);
		para(
			doc,
			`Verified: ${HOW_VERIFIED.map((h) => `${HOW_LABELS[h].toLowerCase()} ${cov.how[h]}`).join(', ')}.`
		);
		sub(doc, 'Coverage per level');
		const perGroup = (groups: typeof cov.byLevel, label: (k: string) => string) =>
			table(
				doc,
				[
					{ header: '', width: 16, value: (g: (typeof cov.byLevel)[number]) => label(g.key) },
					{ header: 'Total', width: 9, value: (g) => String(g.total) },
					...COMBINED_STATES.map((s) => ({
						header: COMBINED_LOOK[s].label,
						width: 12,
						value: (g: (typeof cov.byLevel)[number]) => String(g.states[s])
					}))
				],
				groups.filter((g) => g.total > 0),
				7
			);
		perGroup(cov.byLevel, (k) => LEVEL_LABELS[k] ?? k);
		sub(doc, 'Coverage per assurance level');
		perGroup(cov.byAssurance, (k) => `Level ${k}`);

		sub(doc, 'Findings');
		const open = OPEN_FINDING_STATES.reduce((n, st) => n + c.signoff.counts[st], 0);
		para(
			doc,
			`${open} open, ${c.signoff.counts.deferred} deferred, ${c.signoff.counts.closed} closed (${readAtText(c)}); ${c.signoff.deferred.length} deferred finding${c.signoff.deferred.length === 1 ? '' : 's'} carried ${c.baseline ? 'by the baseline as frozen' : 'in the present state'}. The Findings section lists them.`
		);
		sub(doc, c.previous ? `Changes since baseline #${c.previous.number} (${c.previous.label})` : 'Changes');
		if (!c.previous) {
			para(doc, 'No earlier baseline exists in this project: nothing to compare with.');
		} else {
			const cmp = c.previous.comparison;
			facts(doc, [
				['Compared with', `#${c.previous.number} ${c.previous.label}`],
				['Its manifest SHA-256', c.previous.hash, 'mono'],
				['Requirements added', cmp.requirements.added.map((r) => r.identifier).join(', ') || 'none'],
				['Requirements removed', cmp.requirements.removed.map((r) => r.identifier).join(', ') || 'none'],
				['Requirements changed', String(cmp.requirements.changed.length)],
				['Unchanged', String(cmp.unchanged)],
				[
					'Model versions',
					`added ${cmp.modelVersions.added.join(', ') || 'none'}; removed ${cmp.modelVersions.removed.join(', ') || 'none'}`
				],
				[
					'Evidence',
					`added ${cmp.evidence.added.length}, removed ${cmp.evidence.removed.length}, changed ${cmp.evidence.changed.length}`
				],
				['Trace links', `added ${cmp.links.added.length}, removed ${cmp.links.removed.length}`]
			]);
			if (cmp.requirements.changed.length) {
				doc.moveDown(0.3);
				const LIMIT = 200;
				table(
					doc,
					[
						{
							header: 'Requirement',
							width: 16,
							value: (x: { id: string; f: string; b: string; a: string }) => x.id,
							mono: true
						},
						{ header: 'Changed', width: 16, value: (x) => x.f },
						{ header: 'Before', width: 34, value: (x) => x.b },
						{ header: 'After', width: 34, value: (x) => x.a }
					],
					cmp.requirements.changed
						.flatMap((r) =>
							r.changes.map((ch) => ({
								id: r.identifier,
								f: ch.field,
								b: ch.before.slice(0, 240),
								a: ch.after.slice(0, 240)
							}))
						)
						.slice(0, LIMIT),
					6.5
				);
				const all = cmp.requirements.changed.reduce((s, r) => s + r.changes.length, 0);
				if (all > LIMIT)
					para(doc, `… and ${all - LIMIT} more changes; the comparison page of the app lists them all.`, {
						size: 8,
						color: SOFT
					});
			}
		}
	}
};

const release: ReportSection = {
	id: 'release',
	render(ctx) {
		const { doc, c } = ctx;
		heading(ctx, 'Release', 0, true);
		const so = c.signoff;
		if (!c.baseline) {
			para(doc, 'A draft is not a baseline: it has no release signature and freezes nothing.');
		} else {
			para(
				doc,
				`Baseline #${c.baseline.number} “${c.baseline.label}”, frozen ${utc(c.baseline.frozenAt)} by ${c.baseline.frozenBy}. Its release is a signed act made in the freeze itself; the signed content holds the manifest SHA-256.`
			);
			doc.moveDown(0.3);
			if (!so.release.length)
				para(doc, 'No release signature is recorded for this baseline.', { color: '#a12a22' });
			for (const s of so.release) {
				signatureFacts(doc, s);
				facts(doc, [
					[
						'Signs this manifest',
						s.signsThisManifest
							? `yes: the signed manifest SHA-256 is ${c.manifestHash}`
							: `NO: the signed manifest SHA-256 is not this manifest's ${c.manifestHash}`
					]
				]);
			}
		}
		sub(doc, 'Where the sign-off records come from');
		table(
			doc,
			[
				{ header: 'Record', width: 55, value: (x: [string, string]) => x[0] },
				{ header: 'Source', width: 45, value: (x) => x[1] }
			],
			[
				['Review state of each requirement revision, revision in force', frozenText(c)],
				['Evidence review decisions', frozenText(c)],
				['Deferred findings the baseline carries', frozenText(c)],
				['Release signature', c.baseline ? readAtText(c) : 'none (draft)'],
				['Approval, evidence review and finding signatures', readAtText(c)],
				['Findings and their states', readAtText(c)]
			] as [string, string][],
			8
		);
		para(
			doc,
			'Signature records cannot be changed or deleted once written, so each one reads as it was signed; those made after the freeze are marked. Every signature’s signed content is in the archive (signoff/signed/), and its SHA-256 is the one printed here. A signature does not make Loopwarden a qualified tool (RTCA DO-330).',
			{ size: 8, color: SOFT }
		);
	}
};

const findingsSection: ReportSection = {
	id: 'findings',
	render(ctx) {
		const { doc, c } = ctx;
		const so = c.signoff;
		heading(ctx, 'Findings', 0, true);
		para(doc, `Findings against the requirements of this package, ${readAtText(c)}.`, { color: SOFT });
		doc.moveDown(0.3);
		table(
			doc,
			[
				{ header: 'State', width: 60, value: (s: (typeof FINDING_STATES)[number]) => FINDING_LOOK[s].label },
				{ header: 'Findings', width: 20, value: (s) => String(so.counts[s]) }
			],
			FINDING_STATES,
			8
		);
		sub(doc, c.baseline ? 'Deferred findings the baseline carries' : 'Deferred findings');
		para(doc, `From the manifest (${frozenText(c)}), each with its signed deferral.`, {
			size: 8,
			color: SOFT
		});
		if (!so.deferred.length) para(doc, 'None.', { color: SOFT });
		for (const d of so.deferred) {
			ensure(doc, 60);
			facts(doc, [
				[d.label, `${d.title} (requirement ${d.requirement}, assurance level ${d.assuranceLevel})`],
				['Justification', d.justification ?? '–'],
				['Target date', d.targetDate ?? '–']
			]);
			if (d.signed) signatureFacts(doc, d.signed);
			else para(doc, 'No deferral signature record is found for it.', { color: '#a12a22' });
		}
		sub(doc, 'Every finding');
		if (!so.findings.length) para(doc, 'None.', { color: SOFT });
		else
			table(
				doc,
				[
					{ header: 'Finding', width: 12, value: (f: (typeof so.findings)[number]) => f.label, mono: true },
					{ header: 'Requirement', width: 16, value: (f) => f.requirement.identifier, mono: true },
					{ header: 'DAL', width: 6, value: (f) => f.assuranceLevel },
					{ header: 'State', width: 16, value: (f) => FINDING_LOOK[f.state].label },
					{ header: 'Cause', width: 18, value: (f) => CAUSE_LABELS[f.cause] ?? f.cause },
					{ header: 'Title', width: 36, value: (f) => f.title },
					{
						header: 'Opened',
						width: 26,
						value: (f) =>
							`${utc(f.openedAt)}${so.frozenAt && new Date(f.openedAt) > so.frozenAt ? ', after the freeze' : ''}`
					}
				],
				so.findings,
				6.5
			);
	}
};

const PDF_MATRIX = [
	['Identifier', 60, true],
	['Title', 112],
	['Level', 38],
	['Assurance level', 30],
	['Verification methods', 54],
	['Model version', 30],
	['Latest verdict', 46],
	['Proved', 36],
	['State', 89]
] as const;

const matrix: ReportSection = {
	id: 'matrix',
	render(ctx) {
		const { doc, c } = ctx;
		heading(ctx, 'Trace matrix', 0, true);
		para(
			doc,
			'One row per requirement, as in the matrix spreadsheet of the archive (which has every column). Proved: the proved figure the requirement is judged on (for sector checks the largest proved upper bound).',
			{ size: 8, color: SOFT }
		);
		doc.moveDown(0.4);
		const columns = PDF_MATRIX.map(([header, width, mono]) => {
			const col = MATRIX_COLUMNS.find((m) => m.header === header);
			if (!col) throw new Error(`matrix column ${header} missing`);
			return {
				header: header === 'Assurance level' ? 'DAL' : header,
				width,
				mono: mono === true,
				value: (r: SnapshotRequirement) => {
					const v = col.value(r);
					return v === null ? '' : typeof v === 'number' ? fmt(v) : String(v);
				}
			};
		});
		table(doc, columns, c.manifest.requirements, 6.5);
	}
};

// ---- one requirement ------------------------------------------------------------------------------

export type RequirementPart = (ctx: ReportContext, r: SnapshotRequirement) => void;

const partText: RequirementPart = ({ doc }, r) => {
	facts(doc, [
		['Revision', `${r.revision} (SHA-256 below)`],
		['Level, assurance level', `${LEVEL_LABELS[r.level] ?? r.level}, ${r.assuranceLevel}`],
		['Status', r.status],
		['Verification methods', r.methods.join(', ') || 'none named'],
		['Owner', r.owner?.name ?? 'none'],
		['Derived from', r.parents.join(', ') || 'none'],
		['Derived requirements', r.children.join(', ') || 'none'],
		['Revision SHA-256', r.contentHash, 'mono']
	]);
	sub(doc, 'Statement');
	para(doc, r.statement);
	sub(doc, 'Rationale');
	para(doc, r.rationale || 'none given');
};

const partSpecification: RequirementPart = ({ doc, c }, r) => {
	sub(doc, 'Specification');
	if (!r.spec) {
		para(doc, 'No stability specification.', { color: SOFT });
		return;
	}
	const spec = c.specs.get(r.spec.id);
	facts(doc, [
		['Version', `${r.spec.version}: ${r.spec.check}`],
		[
			'Required margin',
			r.spec.requiredMargin ? `${fmt(r.spec.requiredMargin * 100)} % on the upper bound` : 'none'
		],
		[
			'Operating points',
			spec?.operating_points?.length ? spec.operating_points.join(', ') : 'every point of the model version'
		],
		['Model', r.model ? `${r.model.name} v${r.model.version ?? '?'}` : 'none'],
		['Model SHA-256', r.model?.hash ?? '', 'mono'],
		['Specification SHA-256', r.spec.hash, 'mono']
	]);
};

const verdictText = (v: unknown) => VERDICT_LOOK[String(v)]?.label ?? String(v ?? '');

const partAnalysis: RequirementPart = (ctx, r) => {
	const { doc, c } = ctx;
	sub(doc, 'Analysis');
	const lr = r.latestRun;
	if (!lr) {
		para(doc, `No analysis run (${ANALYSIS_LOOK[r.analysisState]?.label ?? r.analysisState}).`, {
			color: SOFT
		});
		return;
	}
	const run = c.runs.get(lr.id);
	facts(doc, [
		['Run', `#${lr.id}, finished ${utc(lr.finishedAt)}, engine ${lr.engineVersion}`],
		[
			'Verdict',
			`${verdictWords(lr.status, lr.verdict)}${lr.stale ? ' (inputs changed since: re-run due)' : ''}`
		],
		['Numbers', lr.numbers.text],
		['Worst operating point', lr.worstPoint ?? '–'],
		[
			'Inputs',
			`requirement revision ${lr.requirementRevision}, specification v${lr.specVersion}, model v${lr.modelVersion}`
		],
		['Output SHA-256', lr.outputHash ?? '', 'mono']
	]);
	const perPoint = (run?.result?.perPoint ?? []) as Record<string, unknown>[];
	if (perPoint.length) {
		doc.moveDown(0.3);
		table(
			doc,
			[
				{
					header: 'Operating point',
					width: 30,
					value: (p: Record<string, unknown>) => String(p.label ?? '')
				},
				{ header: 'Verdict', width: 16, value: (p) => verdictText(p.verdict) },
				{ header: 'Proved bound', width: 16, value: (p) => fmt(num(p.threshold)) },
				{ header: 'Margin (min Re Z)', width: 16, value: (p) => fmt(num(p.margin)) },
				{
					header: 'Critical frequency',
					width: 22,
					value: (p) => {
						const w = num(p.criticalFrequency);
						return w !== null && Number.isFinite(w) ? frequencyText(w) : '–';
					}
				}
			],
			perPoint,
			7.5
		);
	}
	if (run?.error) para(doc, `Error: ${run.error}`, { color: '#a12a22' });
};

const PLOT = { width: WIDTH, height: 215 };

const partPlots: RequirementPart = ({ doc, c, dry }, r) => {
	const run = r.latestRun ? c.runs.get(r.latestRun.id) : undefined;
	if (!run?.curves) return;
	const stored: StoredRun = {
		verdict: run.verdict as StoredRun['verdict'],
		worstPoint: run.worst_point,
		result: run.result,
		curves: run.curves as StoredRun['curves']
	};
	const ny = nyquistPicture(stored);
	const drawCaption = (lines: string[]) => {
		doc.font('sans').fontSize(7).fillColor(SOFT);
		for (const l of lines) doc.text(safe(l), MARGIN.left, doc.y, { width: WIDTH });
		doc.moveDown(0.4);
	};
	if (ny.curves.length) {
		ensure(doc, PLOT.height + 70);
		sub(doc, 'Nyquist plot');
		const y = doc.y;
		const caption = dry
			? nyquistCaption(ny, PLOT)
			: drawNyquist(doc, { regular: 'sans' }, ny, { x: MARGIN.left, y, ...PLOT });
		doc.y = y + PLOT.height + 4;
		drawCaption(caption);
	}
	const pp = popovPicture(stored);
	if (pp) {
		ensure(doc, PLOT.height + 60);
		sub(doc, 'Popov plot');
		const y = doc.y;
		const caption = dry
			? popovCaption(pp)
			: drawPopov(doc, { regular: 'sans' }, pp, { x: MARGIN.left, y, ...PLOT });
		doc.y = y + PLOT.height + 4;
		drawCaption(caption);
	}
	para(doc, 'The plots illustrate the verdict from the stored curves; the exact algebra decides it.', {
		size: 7,
		color: SOFT
	});
};

const partState: RequirementPart = ({ doc }, r) => {
	sub(doc, 'Verification state');
	para(doc, stateText(r));
	const b = blockerWords(r);
	if (b) para(doc, `Blocked by: ${b}`, { size: 8.5, color: SOFT });
};

const partEvidence: RequirementPart = ({ doc, c }, r) => {
	const items = c.manifest.evidence.filter((e) => e.requirements.includes(r.identifier));
	sub(doc, 'Evidence');
	if (!items.length) {
		para(doc, 'No evidence linked.', { color: SOFT });
		return;
	}
	for (const e of items) {
		ensure(doc, 60);
		facts(doc, [
			[
				`#${e.evidenceId} revision ${e.revision}`,
				`${e.title} (${e.kind}, ${e.method}): ${e.file}, ${e.sizeBytes} bytes, uploaded by ${e.uploadedBy} ${utc(e.uploadedAt)}`
			],
			['SHA-256', e.sha256, 'mono'],
			[
				'Review',
				e.review
					? `${e.review.decision} by ${e.review.reviewer}, ${utc(e.review.reviewedAt)}${e.review.comment ? `: “${e.review.comment}”` : ''}`
					: 'awaiting review'
			]
		]);
		doc.moveDown(0.2);
	}
};

/** Where the not-frozen sign-off records come from, with the time they were read. */
const readAtText = (c: PackageContent) => `${SIGNOFF_SOURCES.readAtPackageTime} (${utc(c.signoff.readAt)})`;
const frozenText = (c: PackageContent) => (c.baseline ? SIGNOFF_SOURCES.frozen : SIGNOFF_SOURCES.draft);

/** One electronic signature: who, the meaning, when, how confirmed, what was signed and its SHA-256. */
function signatureFacts(doc: Doc, s: SignedRecord) {
	ensure(doc, 70);
	facts(doc, [
		[
			`Signature #${s.id}`,
			`${s.label} by ${s.signer.name} (${s.signer.email}) as ${s.signer.role}, ${utc(s.signedAt)}${s.afterFreeze ? ', after the baseline was frozen' : ''}`
		],
		['Confirmed by', s.method],
		['What was signed', s.subject],
		['Meaning', s.meaning],
		...(s.comment ? ([['Comment', `“${s.comment}”`]] as [string, string][]) : []),
		['Signed SHA-256', s.sha256, 'mono'],
		...(s.intact
			? []
			: ([['WARNING', 'The kept signed content no longer hashes to this SHA-256.']] as [string, string][]))
	]);
	doc.moveDown(0.2);
}

const findingLine = (f: PackageContent['signoff']['findings'][number]) =>
	`${f.label} ${FINDING_LOOK[f.state].label} (${CAUSE_LABELS[f.cause] ?? f.cause}): ${f.title}; opened ${utc(f.openedAt)} by ${f.openedBy}${f.state === 'deferred' && f.targetDate ? `; deferred to ${f.targetDate}` : ''}`;

const partSignoff: RequirementPart = ({ doc, c }, r) => {
	const so = c.signoff.byRequirement.get(r.identifier);
	sub(doc, 'Approvals and signatures');
	const review = so?.review;
	facts(doc, [
		[
			'Review',
			review
				? `revision ${review.revision} ${review.state}; revision in force: ${review.approvedRevision ?? 'none approved'} (${frozenText(c)})`
				: `not recorded in this manifest (frozen before reviews were kept)`
		]
	]);
	para(doc, `Signatures below are ${readAtText(c)}; signature records cannot be changed or deleted.`, {
		size: 7.5,
		color: SOFT
	});
	const approvals = so?.approvals ?? [];
	if (!approvals.length) para(doc, 'No approval or return of this requirement is signed.', { color: SOFT });
	for (const s of approvals) signatureFacts(doc, s);
	for (const s of so?.evidence ?? []) signatureFacts(doc, s);
	sub(doc, 'Findings against it');
	const found = so?.findings ?? [];
	para(
		doc,
		found.length ? found.map(findingLine).join('\n') : 'None.',
		found.length ? { size: 8.5 } : { color: SOFT }
	);
	for (const s of so?.findingDecisions ?? []) signatureFacts(doc, s);
	para(doc, `Findings and their signed decisions are ${readAtText(c)}.`, { size: 7.5, color: SOFT });
};

/** The parts of a requirement's section, in order. */
export const REQUIREMENT_PARTS: RequirementPart[] = [
	partText,
	partSpecification,
	partAnalysis,
	partPlots,
	partState,
	partEvidence,
	partSignoff
];

const requirements: ReportSection = {
	id: 'requirements',
	async render(ctx) {
		const { doc, c } = ctx;
		heading(ctx, 'Requirements', 0, true);
		para(doc, `${c.manifest.requirements.length} requirements, each from its own page.`, { color: SOFT });
		const all = c.manifest.requirements;
		for (let i = 0; i < all.length; i++) {
			const r = all[i];
			heading(ctx, `${r.identifier} ${r.title}`, 1, true);
			for (const part of REQUIREMENT_PARTS) part(ctx, r);
			if (i % 10 === 9)
				await ctx.progress((i + 1) / all.length, `report: requirement ${i + 1} of ${all.length}`);
		}
	}
};

const appendix: ReportSection = {
	id: 'appendix',
	render(ctx) {
		const { doc, c } = ctx;
		heading(ctx, 'Appendix A. Methods and their published sources', 0, true);
		for (const m of METHOD_SOURCES) {
			ensure(doc, 50);
			doc.font('bold').fontSize(9).fillColor(INK).text(m.check, MARGIN.left, doc.y, { width: WIDTH });
			para(doc, m.what, { size: 8.5 });
			para(doc, `Source: ${m.source}`, { size: 8, color: SOFT });
			doc.moveDown(0.4);
		}
		sub(doc, 'Verification rule');
		for (const line of ROLL_UP_RULE) {
			para(doc, line, { size: 8.5 });
			doc.moveDown(0.2);
		}

		heading(ctx, 'Appendix B. Model versions', 0, true);
		if (!c.modelVersions.length) para(doc, 'The manifest holds no model version.', { color: SOFT });
		for (const v of c.modelVersions) {
			ensure(doc, 80);
			doc
				.font('bold')
				.fontSize(10)
				.fillColor(INK)
				.text(safe(`${v.model} v${v.version}`), MARGIN.left, doc.y);
			facts(doc, [
				['SHA-256 (canonical JSON)', v.content_hash, 'mono'],
				['Published', utc(v.created_at)],
				['Note', v.note || '–']
			]);
			const points =
				(v.content as { operatingPoints?: { label: string; model: unknown }[] })?.operatingPoints ?? [];
			for (const p of points) {
				ensure(doc, 30);
				para(doc, `Operating point “${p.label}”`, { size: 8.5 });
				// The model as stored, in the archive's canonical JSON (ASCII), wrapped at commas.
				para(doc, canonical(p.model).replace(/,/g, ', '), { size: 7, font: 'mono' });
				doc.moveDown(0.2);
			}
			doc.moveDown(0.5);
		}

		heading(ctx, 'Appendix C. Environment', 0, true);
		facts(doc, [
			['Engine version (verdicts)', c.engineVersion],
			['Engine version (this package)', c.generatorEngineVersion],
			['Application version', c.appVersion],
			['Runtime', `Node.js ${process.version}`],
			['Generated', utc(c.generatedAt)],
			['Generated by', c.generatedBy],
			['Manifest format', c.manifest.format],
			['Manifest SHA-256', c.manifestHash, 'mono']
		]);
		doc.moveDown(0.6);
		para(doc, `${CAUTION_TITLE}. ${CAUTION_TEXT}`, { size: 8, color: SOFT });
	}
};

/** The report's sections after the cover and contents, in order. */
export const REPORT_SECTIONS: ReportSection[] = [
	summary,
	release,
	findingsSection,
	matrix,
	requirements,
	appendix
];

/** Contents lines: the project-level sections, one per requirement, the three appendices. */
const contentsLines = (c: PackageContent) => 5 + c.manifest.requirements.length + 3;

/** Header, footer ("page N of M") and, for a draft, the DRAFT mark of page i (the current page). */
function runningHead(doc: Doc, c: PackageContent, i: number, pages: number) {
	const title = c.baseline
		? `${c.project.key} · Baseline #${c.baseline.number} ${c.baseline.label}`
		: `${c.project.key} · DRAFT of the present state (not a baseline)`;
	// Writing in the margins: pdfkit would start a new page for text below the bottom margin.
	const keep = doc.page.margins.bottom;
	doc.page.margins.bottom = 0;
	if (c.draft) {
		doc.save();
		doc.rotate(-40, { origin: [PAGE.width / 2, PAGE.height / 2] });
		doc
			.font('bold')
			.fontSize(110)
			.fillColor('#a12a22')
			.fillOpacity(0.1)
			.text('DRAFT', 0, PAGE.height / 2 - 60, { width: PAGE.width, align: 'center', lineBreak: false });
		doc.restore();
		doc.fillOpacity(1);
	}
	doc.font('sans').fontSize(7.5).fillColor(SOFT);
	let t = safe(title);
	while (doc.widthOfString(t) > WIDTH - 120 && t.length > 8) t = t.slice(0, -2);
	doc.text(t, MARGIN.left, 30, { lineBreak: false });
	doc.text(`manifest ${c.manifestHash.slice(0, 16)}…`, MARGIN.left + WIDTH - 120, 30, {
		width: 120,
		align: 'right',
		lineBreak: false
	});
	doc
		.moveTo(MARGIN.left, 42)
		.lineTo(MARGIN.left + WIDTH, 42)
		.lineWidth(0.4)
		.strokeColor(RULE)
		.undash()
		.stroke();
	const foot = PAGE.height - 36;
	doc
		.moveTo(MARGIN.left, foot - 6)
		.lineTo(MARGIN.left + WIDTH, foot - 6)
		.lineWidth(0.4)
		.strokeColor(RULE)
		.stroke();
	doc
		.font(c.draft ? 'bold' : 'sans')
		.fillColor(c.draft ? '#a12a22' : SOFT)
		.text(c.draft ? 'DRAFT, not a baseline' : 'Loopwarden data package', MARGIN.left, foot, {
			lineBreak: false
		});
	doc
		.font('sans')
		.fillColor(SOFT)
		.text(`Page ${i + 1} of ${pages}`, MARGIN.left + WIDTH - 120, foot, {
			width: 120,
			align: 'right',
			lineBreak: false
		});
	doc.page.margins.bottom = keep;
}

export interface RenderedReport {
	pdf: Buffer;
	pages: number;
	toc: TocEntry[];
}

interface Plan {
	toc: TocEntry[];
	pages: number;
}

/**
 * One pass over the report. The layout pass (no plan) finds every section's page and the page count;
 * the second pass writes the same layout with the contents and "page N of M" filled in. Pages are
 * written out at every section start, after their running heads are drawn, so memory holds one
 * requirement's pages at a time, not the document.
 */
async function compose(
	c: PackageContent,
	plan: Plan | null,
	progress: (fraction: number, step: string) => Promise<void>,
	measures: Measures
): Promise<{ pdf: Buffer; pages: number; toc: TocEntry[] }> {
	const doc = new PDFDocument({
		size: 'A4',
		margins: MARGIN,
		bufferPages: true,
		autoFirstPage: true,
		info: {
			Title: c.baseline
				? `${c.project.key} baseline #${c.baseline.number} data package`
				: `${c.project.key} draft data package`,
			Author: c.generatedBy,
			Creator: `Loopwarden ${c.appVersion}`,
			Producer: 'Loopwarden (pdfkit)',
			CreationDate: c.generatedAt
		}
	});
	doc.registerFont('sans', FONT_FILES.sans);
	doc.registerFont('bold', FONT_FILES.bold);
	doc.registerFont('mono', FONT_FILES.mono);
	plainText(doc, ['sans', 'bold', 'mono'], measures);
	const chunks: Buffer[] = [];
	doc.on('data', (b: Buffer) => {
		if (plan) chunks.push(b);
	});
	const ended = new Promise<void>((resolve, reject) => {
		doc.on('end', () => resolve());
		doc.on('error', reject);
	});
	const finishPages = () => {
		const r = doc.bufferedPageRange();
		for (let i = r.start; i < r.start + r.count; i++) {
			doc.switchToPage(i);
			runningHead(doc, c, i, plan?.pages ?? 0);
		}
		doc.flushPages();
	};
	const toc: TocEntry[] = [];
	const ctx: ReportContext = {
		doc,
		c,
		toc,
		progress,
		dry: !plan,
		newPage: () => {
			finishPages();
			doc.addPage();
		}
	};
	cover(ctx);
	const contentsPages = contentsPagesFor(contentsLines(c));
	for (let p = 0; p < contentsPages; p++) {
		ctx.newPage();
		if (plan) contentsPage(doc, p, plan.toc);
	}
	for (const s of REPORT_SECTIONS) await s.render(ctx);
	finishPages();
	const pages = doc.bufferedPageRange().count + doc.bufferedPageRange().start;
	doc.end();
	await ended;
	return { pdf: Buffer.concat(chunks), pages, toc };
}

/** Lay out the whole report; `progress` is told the fraction done (0..1) now and then. */
export async function renderReport(
	c: PackageContent,
	progress: (fraction: number, step: string) => Promise<void> = async () => {}
): Promise<RenderedReport> {
	const measures = newMeasures();
	const layout = await compose(c, null, (f, step) => progress(0.3 * f, `layout, ${step}`), measures);
	const out = await compose(
		c,
		{ toc: layout.toc, pages: layout.pages },
		(f, step) => progress(0.3 + 0.7 * f, step),
		measures
	);
	if (out.pages !== layout.pages)
		throw new Error(`report layout changed between passes (${layout.pages} vs ${out.pages} pages)`);
	if (layout.toc.length !== contentsLines(c))
		throw new Error(`the contents reserve ${contentsLines(c)} lines for ${layout.toc.length} sections`);
	return { pdf: out.pdf, pages: out.pages, toc: out.toc };
}
