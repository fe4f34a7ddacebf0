import { ENGINE_VERSION } from '../../stability/index';
import { frequencyText, testedUpper } from '../../verification/decision';
import {
	STATE_ORDER,
	inCount,
	type AnalysisState,
	type CoverageCount,
	type BlockerKind,
	type CombinedState,
	type HowVerified
} from '../../verification/index';
import { recordEvent, type Actor } from '../audit';
import { db, readDb, type Db } from '../db';
import { verificationOf, type RequirementVerification } from '../verification/service';
import * as repo from './repo';
import type { MatrixQuery } from './schema';

// The trace matrix: one row per requirement with its links, the model version in force, the latest
// analysis and its proved numbers, evidence counts, and its one verification state with what
// blocks it (src/lib/server/verification; nothing here decides a state).
// The same rows, with the texts, analyses and evidence, form a "snapshot": what the exports write and
// what a baseline freezes (src/lib/server/baselines).

export interface ProvedNumbers {
	/** The proved figure the requirement is judged on (largest proved upper bound, margin ...). */
	proved: number | null;
	/** @deprecated The same as `proved`, under its old name, kept in the API for one version. */
	certified: number | null;
	/** What the specification asks of it (with the required margin applied), when it is a number. */
	required: number | null;
	/** In words, e.g. "proved upper bound 2.31 vs required 1.995 x 1.2 = 2.394". */
	text: string;
}

const withAlias = (n: Omit<ProvedNumbers, 'certified'>): ProvedNumbers => ({ ...n, certified: n.proved });

export interface LatestRun {
	id: number;
	status: string;
	verdict: string | null;
	/** The run's inputs are no longer the current ones (a newer revision, specification or model version). */
	stale: boolean;
	numbers: ProvedNumbers;
	worstPoint: string | null;
	finishedAt: string | null;
	modelVersionId: number;
	modelVersion: number;
	modelHash: string;
	engineVersion: string;
	specVersion: number;
	check: string;
	outputHash: string | null;
	requirementRevision: number;
}

export interface MatrixRow {
	id: number;
	identifier: string;
	revision: number;
	title: string;
	level: string;
	assuranceLevel: string;
	status: string;
	methods: string[];
	owner: { id: number; name: string } | null;
	parents: string[];
	children: string[];
	model: {
		id: number;
		name: string;
		versionId: number | null;
		version: number | null;
		hash: string | null;
	} | null;
	analysisState: AnalysisState;
	latestRun: LatestRun | null;
	pendingRuns: number;
	evidence: { count: number; accepted: number; rejected: number; unreviewed: number };
	state: CombinedState;
	/** The state in words ("Verified by analysis and through derived requirements", "Blocked", ...). */
	stateLabel: string;
	stateSymbol: string;
	/** How a verified requirement is verified. */
	how: HowVerified | null;
	/** What keeps it from being verified, each with the requirement it points at. */
	blockers: MatrixBlocker[];
	lastChange: string;
}

export interface MatrixBlocker {
	kind: BlockerKind;
	text: string;
	ref: { id: number; identifier: string; state: CombinedState } | null;
}

/** A matrix row with the texts and hashes a baseline keeps. */
export interface SnapshotRequirement extends MatrixRow {
	statement: string;
	rationale: string;
	contentHash: string;
	spec: { id: number; version: number; hash: string; check: string; requiredMargin: number | null } | null;
}

export interface SnapshotEvidence {
	evidenceId: number;
	revision: number;
	fileId: number;
	title: string;
	kind: string;
	method: string;
	file: string;
	sizeBytes: number;
	sha256: string;
	uploadedBy: string;
	uploadedAt: string;
	review: { decision: string; comment: string; reviewer: string; reviewedAt: string } | null;
	requirements: string[];
}

export interface Snapshot {
	format: 'loopwarden-snapshot/2';
	project: { key: string; name: string };
	engineVersion: string;
	requirements: SnapshotRequirement[];
	links: { child: string; parent: string; childRevision: number; parentRevision: number }[];
	modelVersions: { id: number; model: string; version: number; contentHash: string }[];
	evidence: SnapshotEvidence[];
}

const iso = (d: Date | string | null | undefined) => (d ? new Date(d).toISOString() : null);

function num(v: unknown): number | null {
	if (typeof v === 'number' && Number.isFinite(v)) return v;
	if (v === 'Infinity') return Infinity;
	if (v === '-Infinity') return -Infinity;
	return null;
}

/** Four significant figures, as people read proved bounds. */
export function fmt(x: number | null | undefined): string {
	if (x === null || x === undefined || Number.isNaN(x)) return '–';
	if (x === Infinity) return '∞';
	if (x === -Infinity) return '−∞';
	return Number(x.toPrecision(4)).toString();
}

/** The check of a specification in a few words. */
export function checkText(check: Record<string, unknown> | null | undefined): string {
	if (!check) return '';
	const s = check.sector as unknown[] | undefined;
	const sector = s ? `[${fmt(num(s[0]))}, ${fmt(num(s[1]) ?? Infinity)}]` : '';
	switch (check.type) {
		case 'circle':
			return `circle criterion, sector ${sector}`;
		case 'popov':
			return `Popov criterion, sector ${sector}`;
		case 'positive-real':
			return 'positive-real';
		case 'max-sector':
			return `largest sector from ${fmt(num(check.lower))}`;
		case 'margins':
			return `margins, GM >= ${fmt(num(check.minGainMarginDb))} dB, PM >= ${fmt(num(check.minPhaseMarginDeg))} deg`;
		default:
			return String(check.type ?? '');
	}
}

/**
 * The proved figure against the required one. For sector checks the figure is the largest
 * proved upper bound (result.threshold) against the specification's k2, raised by the required
 * margin (k2 x (1 + margin)); for margin checks the gain and phase margins against their minimums.
 */
export function provedNumbers(
	check: Record<string, unknown> | null | undefined,
	result: Record<string, unknown> | null | undefined,
	requiredMargin: number | null | undefined
): ProvedNumbers {
	if (!result) return withAlias({ proved: null, required: null, text: '' });
	const numbers = (result.numbers ?? {}) as Record<string, unknown>;
	if (check?.type === 'margins') {
		const gm = num(numbers.gainMarginDb);
		const pm = num(numbers.phaseMarginDeg);
		const parts = [`GM ${fmt(gm)} dB`];
		if (check.minGainMarginDb !== undefined) parts[0] += ` (min ${fmt(num(check.minGainMarginDb))})`;
		parts.push(
			`PM ${fmt(pm)} deg` +
				(check.minPhaseMarginDeg !== undefined ? ` (min ${fmt(num(check.minPhaseMarginDeg))})` : '')
		);
		return withAlias({ proved: gm, required: num(check.minGainMarginDb), text: parts.join(', ') });
	}
	if (check?.type === 'positive-real') {
		return withAlias({
			proved: num(result.margin),
			required: null,
			text: `class ${String(result.class ?? 'neither')}`
		});
	}
	const sector = check?.sector as unknown[] | undefined;
	const k2 = sector ? num(sector[1]) : null;
	const required = k2 === null ? null : testedUpper(k2, requiredMargin);
	const bound = num(result.threshold);
	// The engine's critical frequency, the number the plots mark and the API gives.
	const wc = num(result.criticalFrequency);
	const critical = wc !== null && Number.isFinite(wc) ? `, critical frequency ${frequencyText(wc)}` : '';
	const reqText =
		k2 === null
			? ''
			: requiredMargin
				? `required ${fmt(k2)} x ${fmt(1 + requiredMargin)} = ${fmt(required)}`
				: `required ${fmt(k2)}`;
	if (bound !== null) {
		return withAlias({
			proved: bound,
			required,
			text: `proved upper bound ${fmt(bound)}${reqText ? ' vs ' + reqText : ''}${critical}`
		});
	}
	const margin = num(result.margin);
	return withAlias({
		proved: null,
		required,
		text:
			[
				sector ? `sector [${fmt(num(sector[0]))}, ${fmt(k2 ?? Infinity)}]` : '',
				margin !== null ? `min Re Z ${fmt(margin)}` : ''
			]
				.filter(Boolean)
				.join(', ') + critical
	});
}

function toRow(r: repo.MatrixDbRow, v: RequirementVerification): MatrixRow {
	return {
		id: Number(r.id),
		identifier: r.identifier,
		revision: r.revision,
		title: r.title,
		level: r.level,
		assuranceLevel: r.assurance_level,
		status: r.status,
		methods: r.methods,
		owner: r.owner_id ? { id: Number(r.owner_id), name: r.owner_name ?? '' } : null,
		parents: r.parents ?? [],
		children: r.children ?? [],
		model: r.model_id
			? {
					id: Number(r.model_id),
					name: r.model_name ?? '',
					versionId: r.model_version_id === null ? null : Number(r.model_version_id),
					version: r.model_version,
					hash: r.model_hash
				}
			: null,
		analysisState: v.analysis,
		latestRun: r.latest_run_id
			? {
					id: Number(r.latest_run_id),
					status: r.latest_status ?? '',
					verdict: r.latest_verdict,
					stale: v.currentRunId === null || v.currentRunId !== Number(r.latest_run_id),
					numbers: provedNumbers(r.latest_spec_check, r.latest_result, r.required_margin),
					worstPoint: r.latest_worst_point,
					finishedAt: iso(r.latest_finished_at),
					modelVersionId: Number(r.latest_model_version_id),
					modelVersion: Number(r.latest_model_version),
					modelHash: r.latest_model_hash ?? '',
					engineVersion: r.latest_engine_version ?? '',
					specVersion: Number(r.latest_spec_version),
					check: checkText(r.latest_spec_check),
					outputHash: r.latest_output_hash,
					requirementRevision: Number(r.latest_requirement_revision)
				}
			: null,
		pendingRuns: v.pendingRuns,
		evidence: {
			count: v.evidenceCounts.accepted + v.evidenceCounts.rejected + v.evidenceCounts.unreviewed,
			...v.evidenceCounts
		},
		state: v.state,
		stateLabel: v.label,
		stateSymbol: v.symbol,
		how: v.how,
		blockers: v.blockers.map((b) => ({ kind: b.kind, text: b.text, ref: b.ref ?? null })),
		lastChange: iso(r.last_change) ?? ''
	};
}

function toSnapshotRow(r: repo.MatrixDbRow, v: RequirementVerification): SnapshotRequirement {
	return {
		...toRow(r, v),
		statement: r.statement,
		rationale: r.rationale,
		contentHash: r.content_hash,
		spec: r.spec_id
			? {
					id: Number(r.spec_id),
					version: Number(r.spec_version),
					hash: r.spec_hash ?? '',
					check: checkText(r.check),
					requiredMargin: r.required_margin
				}
			: null
	};
}

/**
 * The verification state of every requirement of the project (the roll-up needs the whole tree), and
 * for those passing the state filter their rank in the state order, for the query to filter and sort.
 */
async function statesFor(conn: Db, projectId: number, q: MatrixQuery) {
	const all = await verificationOf(conn, { projectId });
	const ids: number[] = [];
	const ranks: number[] = [];
	for (const [id, v] of all) {
		if (q.state?.length && !q.state.includes(v.state)) continue;
		if (q.count && !inCount(q.count as CoverageCount, v)) continue;
		ids.push(id);
		ranks.push(STATE_ORDER.indexOf(v.state));
	}
	return { all, filter: { ids, ranks } };
}

const stateOf = (all: Map<number, RequirementVerification>, r: repo.MatrixDbRow) => {
	const v = all.get(Number(r.id));
	if (!v) throw new Error(`no verification state for ${r.identifier}`);
	return v;
};

export interface MatrixPage {
	rows: MatrixRow[];
	total: number;
	offset: number;
	limit: number;
	pending: number;
}

/** One page of the matrix, filtered and sorted in the database. */
export async function matrixPage(projectId: number, q: MatrixQuery): Promise<MatrixPage> {
	const { all, filter } = await statesFor(readDb(), projectId, q);
	const raw = await repo.matrix(readDb(), projectId, q, q.limit, q.offset, filter);
	const rows = raw.map((r) => toRow(r, stateOf(all, r)));
	return {
		rows,
		total: raw[0]?.total ?? 0,
		offset: q.offset,
		limit: q.limit,
		pending: rows.filter((r) => r.analysisState === 'pending').length
	};
}

/** Every row that passes the filters (for streaming and exports). */
export async function matrixAll(
	projectId: number,
	q: MatrixQuery,
	conn: Db = readDb()
): Promise<MatrixRow[]> {
	const { all, filter } = await statesFor(conn, projectId, q);
	return (await repo.matrix(conn, projectId, q, null, 0, filter)).map((r) => toRow(r, stateOf(all, r)));
}

export const owners = (projectId: number) => repo.owners(db(), projectId);

/** Everything the exports write and baselines freeze, read in one repeatable-read transaction. */
export async function snapshot(projectId: number, q?: MatrixQuery, conn?: Db): Promise<Snapshot> {
	const work = async (trx: Db): Promise<Snapshot> => {
		const project = await repo.projectById(trx, projectId);
		if (!project) throw new Error(`project ${projectId} not found`);
		const query = q ?? ({ sort: 'identifier', dir: 'asc', limit: 100, offset: 0 } as MatrixQuery);
		const { all, filter } = await statesFor(trx, projectId, query);
		const rows = await repo.matrix(trx, projectId, query, null, 0, filter);
		const ev = await repo.evidence(trx, projectId);
		const links = await repo.links(trx, projectId);
		const mvs = await repo.modelVersions(trx, projectId);
		const included = new Set(rows.map((r) => r.identifier));
		return {
			format: 'loopwarden-snapshot/2',
			project: { key: project.key, name: project.name },
			engineVersion: ENGINE_VERSION,
			requirements: rows.map((r) => toSnapshotRow(r, stateOf(all, r))),
			links: links
				.filter((l) => included.has(l.child))
				.map((l) => ({
					child: l.child,
					parent: l.parent,
					childRevision: l.child_revision,
					parentRevision: l.parent_revision
				})),
			modelVersions: mvs.map((m) => ({
				id: Number(m.id),
				model: m.model,
				version: m.version,
				contentHash: m.content_hash
			})),
			evidence: ev.filter((e) => !q || e.requirements.some((id) => included.has(id))).map(toSnapshotEvidence)
		};
	};
	if (conn) return work(conn);
	return readDb().transaction(work, { isolationLevel: 'repeatable read', readOnly: true });
}

function toSnapshotEvidence(e: repo.EvidenceDbRow): SnapshotEvidence {
	return {
		evidenceId: Number(e.evidence_id),
		revision: e.revision,
		fileId: Number(e.file_id),
		title: e.title,
		kind: e.kind,
		method: e.method,
		file: e.original_name,
		sizeBytes: Number(e.size_bytes),
		sha256: e.sha256,
		uploadedBy: e.uploaded_by_label,
		uploadedAt: iso(e.uploaded_at) ?? '',
		review: e.decision
			? {
					decision: e.decision,
					comment: e.comment ?? '',
					reviewer: e.reviewer_label ?? '',
					reviewedAt: iso(e.reviewed_at) ?? ''
				}
			: null,
		requirements: e.requirements
	};
}

/**
 * A snapshot read from cursors, for the exports: the same rows as snapshot(), but each pass over the
 * requirements is a fresh cursor over the one repeatable-read transaction, so a 10,000-row export
 * holds a few hundred rows at a time (plus each requirement's verification state, which the roll-up
 * needs for the whole tree). Passes run one after another; close() ends the transaction.
 */
export interface StreamedSnapshot {
	project: { key: string; name: string };
	engineVersion: string;
	/** How many requirements pass the filters. */
	total: number;
	requirements(): AsyncIterable<SnapshotRequirement>;
	/** Evidence verifying the requirements passed so far (call after a requirements pass). */
	evidence(): AsyncIterable<SnapshotEvidence>;
	close(): Promise<void>;
}

export async function openSnapshot(projectId: number, q: MatrixQuery): Promise<StreamedSnapshot> {
	const trx = await readDb().transaction({ isolationLevel: 'repeatable read', readOnly: true });
	try {
		const project = await repo.projectById(trx, projectId);
		if (!project) throw new Error(`project ${projectId} not found`);
		const { all, filter } = await statesFor(trx, projectId, q);
		// The first row says how many follow (count over the filtered set): open the first pass now.
		const first = repo.matrixCursor(trx, projectId, q, filter)[Symbol.asyncIterator]();
		const head = await first.next();
		const total = head.done ? 0 : Number(head.value.total);
		const included = new Set<string>();
		let firstPass: AsyncIterator<repo.MatrixDbRow> | null = first;
		async function* requirements(): AsyncGenerator<SnapshotRequirement> {
			const source: AsyncIterable<repo.MatrixDbRow> = firstPass
				? (async function* () {
						const it = first;
						if (!head.done) yield head.value;
						for (let n = await it.next(); !n.done; n = await it.next()) yield n.value;
					})()
				: repo.matrixCursor(trx, projectId, q, filter);
			firstPass = null;
			for await (const r of source) {
				included.add(r.identifier);
				yield toSnapshotRow(r, stateOf(all, r));
			}
		}
		async function* evidence(): AsyncGenerator<SnapshotEvidence> {
			for await (const e of repo.evidenceCursor(trx, projectId))
				if (e.requirements.some((id) => included.has(id))) yield toSnapshotEvidence(e);
		}
		return {
			project: { key: project.key, name: project.name },
			engineVersion: ENGINE_VERSION,
			total,
			requirements,
			evidence,
			close: async () => {
				if (!trx.isCompleted()) await trx.commit();
			}
		};
	} catch (e) {
		await trx.rollback().catch(() => {});
		throw e;
	}
}

/** Record an export in the audit trail. */
export async function recordExport(
	actor: Actor,
	projectId: number,
	what: {
		format: 'xlsx' | 'csv' | 'json' | 'pdf' | 'zip';
		rows: number;
		filters?: Record<string, unknown>;
		baselineId?: number | null;
	}
): Promise<void> {
	await db().transaction(async (trx) => {
		await recordEvent(trx, actor, {
			projectId,
			action: what.baselineId ? 'baseline.export' : 'trace.export',
			subjectType: what.baselineId ? 'baseline' : 'project',
			subjectId: what.baselineId ?? projectId,
			after: { format: what.format, rows: what.rows, filters: what.filters ?? {} }
		});
	});
}
