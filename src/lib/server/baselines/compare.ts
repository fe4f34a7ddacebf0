import { stateWords, verdictWords } from '../trace/export';
import type { Snapshot, SnapshotRequirement } from '../trace/service';

// What changed between two manifests (two baselines, or a baseline and the current state), keyed by
// requirement identifier (identifiers are never reused), model name + version and evidence item.

export type ChangeKind =
	'text' | 'attributes' | 'links' | 'model' | 'specification' | 'verdict' | 'evidence' | 'state';

export interface FieldChange {
	kind: ChangeKind;
	field: string;
	before: string;
	after: string;
}

export interface RequirementChange {
	identifier: string;
	title: string;
	changes: FieldChange[];
}

export interface Comparison {
	requirements: {
		added: { identifier: string; title: string }[];
		removed: { identifier: string; title: string }[];
		changed: RequirementChange[];
	};
	modelVersions: { added: string[]; removed: string[] };
	evidence: { added: string[]; removed: string[]; changed: FieldChange[] };
	links: { added: string[]; removed: string[] };
	unchanged: number;
}

const verdictOf = (r: SnapshotRequirement) =>
	r.latestRun ? `${verdictWords(r.latestRun.status, r.latestRun.verdict)} (run ${r.latestRun.id})` : 'none';
const numbersOf = (r: SnapshotRequirement) => r.latestRun?.numbers.text ?? '';
const modelOf = (r: SnapshotRequirement) =>
	r.model ? `${r.model.name} v${r.model.version ?? '?'} (${(r.model.hash ?? '').slice(0, 12)})` : 'none';
const evidenceOf = (s: Snapshot, identifier: string) =>
	s.evidence
		.filter((e) => e.requirements.includes(identifier))
		.map((e) => `#${e.evidenceId} r${e.revision} ${e.review?.decision ?? 'awaiting review'}`)
		.sort()
		.join(', ') || 'none';

function requirementChanges(
	a: Snapshot,
	b: Snapshot,
	x: SnapshotRequirement,
	y: SnapshotRequirement
): FieldChange[] {
	const out: FieldChange[] = [];
	const push = (kind: ChangeKind, field: string, before: string, after: string) => {
		if (before !== after) out.push({ kind, field, before, after });
	};
	push('text', 'revision', String(x.revision), String(y.revision));
	push('text', 'title', x.title, y.title);
	push('text', 'statement', x.statement, y.statement);
	push('text', 'rationale', x.rationale, y.rationale);
	push('attributes', 'level', x.level, y.level);
	push('attributes', 'assurance level', x.assuranceLevel, y.assuranceLevel);
	push('attributes', 'verification methods', x.methods.join(', '), y.methods.join(', '));
	push('attributes', 'status', x.status, y.status);
	push('attributes', 'owner', x.owner?.name ?? '', y.owner?.name ?? '');
	push('links', 'derived from', x.parents.join(', '), y.parents.join(', '));
	push('model', 'model version', modelOf(x), modelOf(y));
	push(
		'specification',
		'specification',
		x.spec ? `v${x.spec.version} ${x.spec.check}` : 'none',
		y.spec ? `v${y.spec.version} ${y.spec.check}` : 'none'
	);
	push('verdict', 'latest verdict', verdictOf(x), verdictOf(y));
	push('verdict', 'proved numbers', numbersOf(x), numbersOf(y));
	push('evidence', 'evidence', evidenceOf(a, x.identifier), evidenceOf(b, y.identifier));
	push('state', 'state', stateWords(x), stateWords(y));
	return out;
}

function setDiff(a: string[], b: string[]) {
	const sa = new Set(a);
	const sb = new Set(b);
	return { added: b.filter((x) => !sa.has(x)), removed: a.filter((x) => !sb.has(x)) };
}

export function compareSnapshots(a: Snapshot, b: Snapshot): Comparison {
	const before = new Map(a.requirements.map((r) => [r.identifier, r]));
	const after = new Map(b.requirements.map((r) => [r.identifier, r]));
	const added = b.requirements
		.filter((r) => !before.has(r.identifier))
		.map((r) => ({ identifier: r.identifier, title: r.title }));
	const removed = a.requirements
		.filter((r) => !after.has(r.identifier))
		.map((r) => ({ identifier: r.identifier, title: r.title }));
	const changed: RequirementChange[] = [];
	let unchanged = 0;
	for (const y of b.requirements) {
		const x = before.get(y.identifier);
		if (!x) continue;
		const changes = requirementChanges(a, b, x, y);
		if (changes.length) changed.push({ identifier: y.identifier, title: y.title, changes });
		else unchanged++;
	}
	const mv = (s: Snapshot) =>
		s.modelVersions.map((m) => `${m.model} v${m.version} (${m.contentHash.slice(0, 12)})`);
	const link = (s: Snapshot) => s.links.map((l) => `${l.child} derived from ${l.parent}`);
	const evA = new Map(a.evidence.map((e) => [e.evidenceId, e]));
	const evB = new Map(b.evidence.map((e) => [e.evidenceId, e]));
	const evChanged: FieldChange[] = [];
	for (const e of b.evidence) {
		const old = evA.get(e.evidenceId);
		if (!old) continue;
		const was = `r${old.revision} ${old.sha256.slice(0, 12)} ${old.review?.decision ?? 'awaiting review'}`;
		const now = `r${e.revision} ${e.sha256.slice(0, 12)} ${e.review?.decision ?? 'awaiting review'}`;
		if (was !== now)
			evChanged.push({ kind: 'evidence', field: `#${e.evidenceId} ${e.title}`, before: was, after: now });
	}
	return {
		requirements: { added, removed, changed },
		modelVersions: setDiff(mv(a), mv(b)),
		evidence: {
			added: b.evidence.filter((e) => !evA.has(e.evidenceId)).map((e) => `#${e.evidenceId} ${e.title}`),
			removed: a.evidence.filter((e) => !evB.has(e.evidenceId)).map((e) => `#${e.evidenceId} ${e.title}`),
			changed: evChanged
		},
		links: setDiff(link(a), link(b)),
		unchanged
	};
}
