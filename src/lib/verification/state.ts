// A requirement's one verification state: its analysis, its evidence per method, what blocks it, and
// its derived requirements. Pure: the server, the browser and the exports all import this module; the
// bulk inputs come from one SQL definition (src/lib/server/verification/repo.ts).
import { checkConsistency } from '../requirements/consistency';
import { ANALYSIS_LOOK, analysisStateOf, type AnalysisState, type RunFacts, type Tone } from './analysis';
import { evidenceByMethod, type EvidenceFact, type EvidenceState } from './evidence';
import { placeholdersIn } from './placeholders';

export const COMBINED_STATES = [
	'verified',
	'not-proved',
	'not-applicable',
	'blocked',
	'pending',
	'not-covered'
] as const;
export type CombinedState = (typeof COMBINED_STATES)[number];

export const COMBINED_LOOK: Record<CombinedState, { symbol: string; label: string; tone: Tone }> = {
	verified: { symbol: '✓', label: 'Verified', tone: 'ok' },
	'not-proved': { symbol: '✕', label: 'Not proved', tone: 'bad' },
	'not-applicable': { symbol: '⊘', label: 'Criterion not applicable', tone: 'bad' },
	blocked: { symbol: '!', label: 'Blocked', tone: 'bad' },
	pending: { symbol: '…', label: 'Pending', tone: 'wait' },
	'not-covered': { symbol: '○', label: 'Not covered', tone: 'none' }
};

/** Worst first: the order of the matrix's state sort and of the coverage legend. */
export const STATE_ORDER: readonly CombinedState[] = [
	'not-proved',
	'not-applicable',
	'blocked',
	'pending',
	'not-covered',
	'verified'
];

export const HOW_VERIFIED = ['directly', 'through-children', 'both'] as const;
export type HowVerified = (typeof HOW_VERIFIED)[number];
export const HOW_LABELS: Record<HowVerified, string> = {
	directly: 'directly (its own methods)',
	'through-children': 'through its derived requirements',
	both: 'directly and through its derived requirements'
};

export const BLOCKER_KINDS = [
	'disagreement',
	'placeholder',
	'not-proved',
	'not-applicable',
	'inconclusive',
	'analysis-error',
	'stale-engine',
	'pending-run',
	'open-review',
	'rejected-evidence',
	'no-spec',
	'not-analysed',
	'no-evidence',
	'no-method',
	'child-not-verified',
	'open-finding'
] as const;
export type BlockerKind = (typeof BLOCKER_KINDS)[number];

/** Short words per kind (filters, column headers, the open-items sheet). */
export const BLOCKER_LABELS: Record<BlockerKind, string> = {
	disagreement: 'Statement and specification disagree',
	placeholder: 'Placeholder in the statement',
	'not-proved': 'Analysis: not proved',
	'not-applicable': 'Analysis: criterion not applicable',
	inconclusive: 'Analysis inconclusive',
	'analysis-error': 'Analysis ended in an error',
	'stale-engine': 'Verdict from an earlier engine version',
	'pending-run': 'Analysis run pending',
	'open-review': 'Evidence awaiting review',
	'rejected-evidence': 'Rejected evidence',
	'no-spec': 'Analysis named as a method but no stability specification',
	'not-analysed': 'Specification without a model version to analyse',
	'no-evidence': 'Method named but no accepted evidence',
	'no-method': 'No verification method and no derived requirement',
	'child-not-verified': 'A derived requirement is not verified',
	'open-finding': 'Open finding'
};

/**
 * How much a blocker weighs: the state a requirement takes from its worst blocker. 'note' is an open
 * item that does not move the state by itself (an open finding: its cause, a failed run or rejected
 * evidence, already weighs on its own).
 */
type Weight = 'not-proved' | 'not-applicable' | 'blocked' | 'pending' | 'missing' | 'note';
const WEIGHT_ORDER: Exclude<Weight, 'note'>[] = [
	'not-proved',
	'not-applicable',
	'blocked',
	'pending',
	'missing'
];
const WEIGHT_STATE: Record<Exclude<Weight, 'note'>, CombinedState> = {
	'not-proved': 'not-proved',
	'not-applicable': 'not-applicable',
	blocked: 'blocked',
	pending: 'pending',
	missing: 'not-covered'
};

export interface Blocker {
	kind: BlockerKind;
	/** One sentence for the reader. */
	text: string;
	/** The requirement it points at (a derived requirement), for a link. */
	ref?: { id: number; identifier: string; state: CombinedState };
	weight: Weight;
}

/** What the database gives for one requirement (one row of the verification inputs). */
export interface RequirementFacts {
	id: number;
	identifier: string;
	status: string;
	methods: readonly string[];
	statement: string;
	spec: { id: number; check: unknown; requiredMargin: number | null } | null;
	/** The model version in force for the specification (null: the model has no version). */
	modelVersionId: number | null;
	/** The run of the current inputs under this engine version. */
	run: (RunFacts & { id: number }) | null;
	/** Runs of this requirement queued or running (any inputs). */
	pendingRuns: number;
	/** Engine version of the latest finished run (any inputs). */
	latestEngineVersion: string | null;
	evidence: readonly EvidenceFact[];
	/** Active derived requirements (children), by id. */
	children: readonly number[];
	/** Labels ("F-3") of the findings against it not yet closed, deferred or declared not a defect (./findings.ts). */
	openFindings?: readonly string[];
}

export interface VerificationState {
	state: CombinedState;
	label: string;
	symbol: string;
	tone: Tone;
	analysis: AnalysisState;
	evidence: Record<string, EvidenceState>;
	/** Set when verified. */
	how: HowVerified | null;
	blockers: Blocker[];
}

const METHOD_WORDS: Record<string, string> = {
	analysis: 'analysis',
	test: 'test',
	inspection: 'inspection',
	demonstration: 'demonstration'
};
const methodWord = (m: string) => METHOD_WORDS[m] ?? m;
const capital = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);

function listWords(words: string[]): string {
	if (words.length <= 1) return words.join('');
	return `${words.slice(0, -1).join(', ')} and ${words[words.length - 1]}`;
}

/**
 * The label of a verified requirement: the methods it satisfied itself, and whether through its
 * derived requirements.
 */
export function verifiedLabel(direct: readonly string[], how: HowVerified): string {
	const by = `by ${listWords(direct.map(methodWord))}`;
	if (how === 'through-children' || direct.length === 0) return 'Verified through derived requirements';
	if (how === 'both') return `Verified ${by} and through derived requirements`;
	return `Verified ${by}`;
}

/**
 * The methods a requirement satisfies itself: analysis when the run of its current inputs proved it,
 * any other method when accepted evidence of that method verifies it (only methods it names).
 */
export function directMethods(f: RequirementFacts): string[] {
	return f.methods.filter((m) =>
		m === 'analysis'
			? analysisStateOf({ specId: f.spec?.id ?? null, modelVersionId: f.modelVersionId, run: f.run }) ===
				'verified'
			: f.evidence.some((e) => e.method === m && e.decision === 'accepted')
	);
}

// The consistency check is the costly part of a state (regular expressions over the statement); the
// same statement and specification give the same answer, so answers are remembered (bounded).
const disagreements = new Map<string, string | null>();
function disagreement(statement: string, spec: NonNullable<RequirementFacts['spec']>): string | null {
	const key = `${statement}\u0000${JSON.stringify(spec.check)}\u0000${spec.requiredMargin}`;
	let v = disagreements.get(key);
	if (v === undefined) {
		const c = checkConsistency(statement, {
			check: spec.check as never,
			requiredMargin: spec.requiredMargin
		});
		v =
			c.status === 'mismatch'
				? (c.findings.find((x) => x.kind === 'mismatch')?.message ?? 'their numbers differ.')
				: null;
		if (disagreements.size >= 50_000) disagreements.clear();
		disagreements.set(key, v);
	}
	return v;
}

/**
 * The blockers of a requirement's own (not its children's). A requirement with derived requirements
 * may leave a method it names to them: a method it has nothing of its own for (no specification, no
 * evidence of that method) is then covered through its children, not missing.
 */
export function ownBlockers(f: RequirementFacts, engineVersion: string, hasChildren: boolean): Blocker[] {
	const out: Blocker[] = [];
	const add = (kind: BlockerKind, weight: Weight, text: string) => out.push({ kind, weight, text });
	if (f.spec) {
		const mismatch = disagreement(f.statement, f.spec);
		if (mismatch !== null)
			add('disagreement', 'blocked', `The statement and the specification disagree: ${mismatch}`);
	}
	for (const word of [...new Set(placeholdersIn(f.statement).map((p) => p.word))])
		add('placeholder', 'blocked', `The statement still holds the placeholder "${word}".`);

	const analysis = analysisStateOf({
		specId: f.spec?.id ?? null,
		modelVersionId: f.modelVersionId,
		run: f.run
	});
	switch (analysis) {
		case 'not-proved':
			add(
				'not-proved',
				'not-proved',
				'The analysis did not prove absolute stability for the required sector (the criterion is sufficient, not necessary: this is not a proof of instability).'
			);
			break;
		case 'not-applicable': {
			const na = f.run?.notApplicable;
			add(
				'not-applicable',
				'not-applicable',
				`Criterion not applicable: its precondition "${na?.precondition ?? 'unnamed'}" does not hold${na?.point ? ` at the operating point "${na.point}"` : ''}; this is not a proof of instability.${na?.remedy ? ` ${na.remedy}` : ''}`
			);
			break;
		}
		case 'inconclusive':
			add('inconclusive', 'blocked', 'The analysis was inconclusive.');
			break;
		case 'error':
			add('analysis-error', 'blocked', 'The analysis ended in an error.');
			break;
		case 'pending':
			if (f.latestEngineVersion && f.latestEngineVersion !== engineVersion)
				add(
					'stale-engine',
					'pending',
					`The last verdict came from engine ${f.latestEngineVersion}; the run with engine ${engineVersion} has not finished.`
				);
			else add('pending-run', 'pending', 'The analysis of the current inputs has not finished.');
			break;
		case 'not-analysed':
			if (f.spec) add('not-analysed', 'missing', 'The specification’s model has no published version.');
			break;
	}
	if (analysis !== 'pending' && f.pendingRuns > 0)
		add('pending-run', 'pending', 'A re-run of this requirement is queued or running.');

	if (f.methods.includes('analysis') && !f.spec && !hasChildren)
		add('no-spec', 'missing', 'Analysis is named as a method but there is no stability specification.');
	for (const m of f.methods) {
		if (m === 'analysis') continue;
		const mine = f.evidence.filter((e) => e.method === m);
		const rejected = mine.filter((e) => e.decision === 'rejected').length;
		const open = mine.filter((e) => e.decision === null).length;
		const accepted = mine.filter((e) => e.decision === 'accepted').length;
		if (rejected)
			add(
				'rejected-evidence',
				'blocked',
				`${rejected === 1 ? 'One' : rejected} ${methodWord(m)} evidence item${rejected === 1 ? ' was' : 's were'} rejected.`
			);
		if (open)
			add(
				'open-review',
				'pending',
				`${open === 1 ? 'One' : open} ${methodWord(m)} evidence item${open === 1 ? ' awaits' : 's await'} review.`
			);
		if (!accepted && !open && !(hasChildren && mine.length === 0))
			add(
				'no-evidence',
				'missing',
				`${capital(methodWord(m))} is named as a method but no evidence was accepted.`
			);
	}
	if (f.methods.length === 0 && !hasChildren)
		add('no-method', 'missing', 'No verification method is named and nothing is derived from it.');
	const findings = f.openFindings ?? [];
	if (findings.length > 0)
		add(
			'open-finding',
			'note',
			`${findings.length === 1 ? 'Finding' : 'Findings'} ${listWords([...findings])} ${findings.length === 1 ? 'is' : 'are'} open against it.`
		);
	return out;
}

function stateOfBlockers(blockers: readonly Blocker[]): CombinedState | null {
	for (const w of WEIGHT_ORDER) if (blockers.some((b) => b.weight === w)) return WEIGHT_STATE[w];
	return null;
}

/**
 * Every requirement's state, rolled up through the requirement tree: a requirement with derived
 * requirements is verified only when every (non-retired) derived one is verified and its own methods,
 * if any, are satisfied; a derived requirement that is not verified shows on every ancestor as one
 * blocker per requirement where the trouble starts, with a link to it.
 */
export function verificationStates(
	facts: readonly RequirementFacts[],
	engineVersion: string
): Map<number, VerificationState> {
	const byId = new Map(facts.map((f) => [f.id, f]));
	const out = new Map<number, VerificationState & { origins: Map<number, CombinedState> }>();
	const visiting = new Set<number>();

	const evaluate = (f: RequirementFacts): VerificationState & { origins: Map<number, CombinedState> } => {
		const done = out.get(f.id);
		if (done) return done;
		visiting.add(f.id);
		const kids = f.children
			.map((id) => byId.get(id))
			.filter((k): k is RequirementFacts => !!k && k.status !== 'retired' && !visiting.has(k.id));
		const own = ownBlockers(f, engineVersion, kids.length > 0);
		const origins = new Map<number, CombinedState>();
		const ownState = stateOfBlockers(own);
		if (ownState) origins.set(f.id, ownState);
		const childBlockers: Blocker[] = [];
		for (const k of kids) {
			const ks = evaluate(k);
			if (ks.state === 'verified') continue;
			for (const [id, st] of ks.origins) {
				if (id === f.id || origins.has(id)) continue;
				origins.set(id, st);
				const o = byId.get(id)!;
				childBlockers.push({
					kind: 'child-not-verified',
					weight: st === 'pending' ? 'pending' : st === 'not-covered' ? 'missing' : 'blocked',
					text: `A derived requirement is not verified: ${o.identifier} (${COMBINED_LOOK[st].label}).`,
					ref: { id, identifier: o.identifier, state: st }
				});
			}
		}
		const blockers = [...own, ...childBlockers];
		const state = stateOfBlockers(blockers) ?? 'verified';
		const direct = directMethods(f);
		const how: HowVerified | null =
			state !== 'verified'
				? null
				: kids.length === 0
					? 'directly'
					: direct.length === 0
						? 'through-children'
						: 'both';
		const look = COMBINED_LOOK[state];
		const s = {
			state,
			label: how ? verifiedLabel(direct, how) : look.label,
			symbol: look.symbol,
			tone: look.tone,
			analysis: analysisStateOf({ specId: f.spec?.id ?? null, modelVersionId: f.modelVersionId, run: f.run }),
			evidence: evidenceByMethod(
				f.evidence,
				f.methods.filter((m) => m !== 'analysis')
			),
			how,
			blockers,
			origins
		};
		visiting.delete(f.id);
		out.set(f.id, s);
		return s;
	};
	for (const f of facts) evaluate(f);
	const result = new Map<number, VerificationState>();
	for (const [id, s] of out) {
		const { origins: _origins, ...rest } = s;
		void _origins;
		result.set(id, rest);
	}
	return result;
}

/**
 * Blockers that refuse a baseline freeze: open values, verdicts not yet computed, and open findings (a
 * deferred finding is not open: the baseline lists it instead).
 */
export function blocksFreeze(b: { kind: BlockerKind }): boolean {
	return (
		b.kind === 'placeholder' ||
		b.kind === 'pending-run' ||
		b.kind === 'stale-engine' ||
		b.kind === 'open-finding'
	);
}

/**
 * Blockers that refuse approving a requirement revision: what is wrong with its text (a placeholder, a
 * statement that disagrees with its specification). Verdicts and evidence are not the approver's act.
 */
export function blocksApproval(b: { kind: BlockerKind }): boolean {
	return b.kind === 'placeholder' || b.kind === 'disagreement';
}

export { ANALYSIS_LOOK };

/**
 * Whether a requirement's analysis state says something its one verification state does not: false
 * when the combined words already carry it ("Verified by analysis" beside an analysis "Verified by
 * analysis", "Not proved" twice, a pending run while the state is pending), so a page that shows both
 * shows the state once.
 */
export function analysisAddsToState(
	v: { state: CombinedState; label: string },
	analysis: AnalysisState
): boolean {
	if (analysis === 'verified') return !(v.state === 'verified' && /\banalysis\b/.test(v.label));
	if (analysis === 'not-proved' || analysis === 'not-applicable') return v.state !== analysis;
	if (analysis === 'pending') return v.state !== 'pending';
	return true;
}
