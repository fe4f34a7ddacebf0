// Requirement quality hints, computed as the engineer types (in the browser) and again on the server.
// Pure: no I/O, no server imports. Every rule names the published guidance it comes from:
//   [NASA-C]  NASA Systems Engineering Handbook, NASA/SP-2016-6105 Rev 2, Appendix C
//             "How to Write a Good Requirement" (checklist; wording recalled from memory).
//   [INCOSE]  INCOSE Guide to Writing Requirements (v3), rule numbers from memory.
//   [EARS]    Mavin, Wilkinson, Harwood, Novak: "Easy Approach to Requirements Syntax (EARS)", RE'09.
// Only placeholders (TBD, TBR, TBS, TBC, TBA: src/lib/verification/placeholders.ts) block approval;
// everything else is a hint.
import { placeholderPattern } from '../verification/placeholders';

export type HintSeverity = 'hint' | 'blocker';

export interface QualityHint {
	rule: string;
	severity: HintSeverity;
	message: string;
	/** Character offsets [start, end) in the statement. */
	span?: [number, number];
}

export type EarsShape = 'ubiquitous' | 'state' | 'event' | 'feature' | 'unwanted' | 'complex' | 'none';

interface Found {
	start: number;
	end: number;
	text: string;
}

function findAll(text: string, re: RegExp): Found[] {
	const flags = re.flags.includes('g') ? re.flags : re.flags + 'g';
	const g = new RegExp(re.source, flags);
	const out: Found[] = [];
	for (const m of text.matchAll(g)) {
		if (m.index === undefined) continue;
		out.push({ start: m.index, end: m.index + m[0].length, text: m[0] });
	}
	return out;
}

/** A word (or phrase) as a whole word, case-insensitive. Inner spaces match any run of whitespace. */
function words(list: readonly string[]): RegExp {
	const alt = list
		.map((w) => w.replace(/[.*+?^${}()|[\]\\]/g, '\\$&').replace(/ /g, '\\s+'))
		.sort((a, b) => b.length - a.length)
		.join('|');
	return new RegExp(`(?<![\\w-])(?:${alt})(?![\\w-])`, 'gi');
}

const overlaps = (a: Found, b: { start: number; end: number }) => a.start < b.end && b.start < a.end;

// [INCOSE] R7 (vague terms), R32 (universal qualification: "each" rather than "any"/"some");
// DOMAIN list: some, any, several, adequate, sufficient, robust, fast, approximately.
export const VAGUE_WORDS = [
	'some',
	'any',
	'several',
	'many',
	'few',
	'various',
	'adequate',
	'adequately',
	'sufficient',
	'sufficiently',
	'robust',
	'robustly',
	'fast',
	'quickly',
	'rapid',
	'rapidly',
	'approximately',
	'about',
	'nearly',
	'almost',
	'roughly',
	'reasonable',
	'acceptable',
	'appropriate',
	'suitable',
	'efficient',
	'flexible',
	'easy',
	'user-friendly',
	'minimal',
	'maximal',
	'optimal',
	'minimize',
	'maximize',
	'minimise',
	'maximise',
	'typical',
	'typically',
	'normally',
	'usually',
	'generally',
	'significant',
	'significantly',
	'good',
	'well'
] as const;

// [INCOSE] R8 escape clauses; [NASA-C] "avoid ... as appropriate, if possible".
export const ESCAPE_CLAUSES = [
	'as far as possible',
	'as much as possible',
	'where possible',
	'if possible',
	'if necessary',
	'when necessary',
	'as necessary',
	'as appropriate',
	'if appropriate',
	'where appropriate',
	'as applicable',
	'where applicable',
	'if practical',
	'where practical',
	'as required',
	'to the extent possible',
	'to the extent practicable'
] as const;

// [INCOSE] R9 open-ended clauses; [INCOSE] R15/R17 logical expressions and the oblique "and/or".
export const OPEN_ENDINGS = [
	'etc.',
	'etc',
	'and so on',
	'including but not limited to',
	'and/or',
	'not limited to'
] as const;

// [INCOSE] R10 superfluous infinitives.
export const SUPERFLUOUS_INFINITIVES = [
	'be able to',
	'be capable of',
	'be designed to',
	'be possible to',
	'have the capability to',
	'be capable to'
] as const;

// [INCOSE] R20 purpose phrases: the reason belongs in the rationale.
export const PURPOSE_PHRASES = [
	'in order to',
	'so that',
	'so as to',
	'for the purpose of',
	'with the aim of'
] as const;

// [INCOSE] R24 pronouns: the subject must be named, not referred to.
export const PRONOUNS = [
	'it',
	'its',
	'this',
	'these',
	'those',
	'they',
	'them',
	'their',
	'he',
	'she',
	'him',
	'her'
] as const;

// [INCOSE] R16 use of "not"; [NASA-C] "state what the system shall do, not what it shall not do".
export const NEGATIVES = [
	'not',
	'never',
	'no',
	'none',
	'neither',
	'nor',
	'cannot',
	"can't",
	"won't",
	'without'
] as const;

// [INCOSE] R18 single thought, R19 combinators.
export const COMBINATORS = ['and', 'or', 'unless', 'but', 'whereas', 'otherwise', 'also'] as const;

// Units recognised after a number ([INCOSE] R6 common units, R33 range of values, R34 measurable performance).
const UNIT =
	'(?:dB|deg(?:rees?)?|°C?|%|per\\s?cent|Hz|kHz|MHz|rad/s|rad|rpm|s|ms|µs|us|ns|min|h|hours?|minutes?|seconds?|' +
	'm/s²?|m/s\\^?2|m/s|km/h|kn|kt|knots?|ft|mm|cm|km|m|kg|g|t|N·?m|Nm|kN|N|kV|mV|V|mA|kA|A|kW|MW|W|kWh|Wh|Pa|kPa|MPa|bar|K|C|' +
	'times|x|samples?|cycles?|bits?|bytes?)';
const NUM = '[-+±−]?\\d+(?:\\.\\d+)?(?:[eE][-+]?\\d+)?';
const NUMBER_RE = new RegExp(`(?<![\\w.\\-/])${NUM}`, 'g');
const UNIT_AFTER = new RegExp(`^\\s?${UNIT}(?![A-Za-z0-9])`);
// An interval: [a, b], (a, b], [a; b) ... with numeric or symbolic bounds.
const INTERVAL_RE = /[[(]\s*([^\][(),;]{1,24}?)\s*[,;]\s*([^\][(),;]{1,24}?)\s*[\])]/g;
const BETWEEN_RE = new RegExp(`\\bbetween\\s+(${NUM})\\s*(?:${UNIT})?\\s+and\\s+(${NUM})`, 'gi');
const NUMERIC_BOUND = new RegExp(`^(?:${NUM}|[-+]?(?:∞|inf|infinity))$`, 'i');

// Words after which a bare number is a quantity, not the name of an item.
const QUANTITY_WORDS = new Set(
	(
		'to of than within least most below above under over exceed exceeds exceeding be is are equal equals by from ' +
		'and or after for up down maximum minimum max min limit limited limits at have has with hold holds keep keeps ' +
		'take takes use uses reach reaches tolerate tolerates exactly only every per than'
	).split(' ')
);

export interface Interval extends Found {
	bounds: [string, string];
	numeric: boolean;
}

/** Intervals such as "[0.5, 1.8]" or "[k1, k2]" in the text. */
export function intervalsIn(text: string): Interval[] {
	const out: Interval[] = [];
	for (const m of text.matchAll(INTERVAL_RE)) {
		if (m.index === undefined) continue;
		const a = m[1].trim();
		const b = m[2].trim();
		out.push({
			start: m.index,
			end: m.index + m[0].length,
			text: m[0],
			bounds: [a, b],
			numeric: NUMERIC_BOUND.test(a) && NUMERIC_BOUND.test(b)
		});
	}
	return out;
}

const cut = (t: string) => (t.length > 40 ? t.slice(0, 37) + '…' : t);

/** The EARS sentence shape of a statement ([EARS], section 3). */
export function earsShape(statement: string): EarsShape {
	const s = statement.trim();
	const starts = {
		while: /^while\b/i.test(s),
		when: /^when\b/i.test(s) || /^while\b[^,]*,\s*when\b/i.test(s),
		where: /^where\b/i.test(s),
		if: /^if\b[\s\S]*\bthen\b/i.test(s)
	};
	const n = Object.values(starts).filter(Boolean).length;
	if (!/\bshall\b/i.test(s)) return 'none';
	if (n > 1) return 'complex';
	if (starts.if) return 'unwanted';
	if (starts.when) return 'event';
	if (starts.while) return 'state';
	if (starts.where) return 'feature';
	if (/^the\b/i.test(s)) return 'ubiquitous';
	return 'none';
}

// The hints of a statement never change: a page shows them for the same text on every view (and its
// component asks again while rendering), so recent results are kept. Callers must not mutate them.
const recent = new Map<string, readonly QualityHint[]>();
const RECENT_MAX = 500;

/** All quality hints for one requirement statement, in the order they occur. */
export function qualityHints(statement: string): QualityHint[] {
	const key = statement ?? '';
	const hit = recent.get(key);
	if (hit) return hit as QualityHint[];
	const hints = computeHints(key);
	if (recent.size >= RECENT_MAX) recent.delete(recent.keys().next().value!);
	recent.set(key, Object.freeze(hints.map((h) => Object.freeze(h))));
	return recent.get(key) as QualityHint[];
}

function computeHints(statement: string): QualityHint[] {
	const text = statement;
	const hints: QualityHint[] = [];
	const add = (rule: string, f: Found | null, message: string, severity: HintSeverity = 'hint') =>
		hints.push({ rule, severity, message, ...(f ? { span: [f.start, f.end] as [number, number] } : {}) });
	if (!text.trim()) return hints;

	// [NASA-C] and [INCOSE] R2/R3: one requirement, one "shall" (binding); "will" states a fact or
	// intent, "should" a goal, "must" is not our binding verb.
	const shalls = findAll(text, /\bshall\b/gi);
	if (shalls.length === 0)
		add('one-shall', null, 'No "shall": a requirement states what shall be done, with one "shall".');
	else if (shalls.length > 1)
		add(
			'one-shall',
			shalls[1],
			`${shalls.length} "shall"s: split this into ${shalls.length} requirements, one "shall" each.`
		);
	for (const f of findAll(text, /\b(?:will|should|must)\b/gi)) {
		const w = f.text.toLowerCase();
		const why =
			w === 'will'
				? '"will" states a fact or an intention, not a requirement'
				: w === 'should'
					? '"should" states a goal, not a requirement'
					: '"must" is not the binding verb here';
		add('shall-not-will', f, `${why}: use "shall".`);
	}

	// Placeholders block approval and any baseline ([NASA-C]: "TBD/TBR items are tracked and closed");
	// the one pattern is src/lib/verification/placeholders.ts.
	for (const f of findAll(text, placeholderPattern())) {
		add(
			'placeholder',
			f,
			`"${f.text}" is a placeholder: replace it with the value before approval.`,
			'blocker'
		);
	}

	const intervals = intervalsIn(text);
	const numericIntervals = intervals.filter((i) => i.numeric);
	const betweens = findAll(text, BETWEEN_RE);

	// Vague words; "any gain in [k1, k2]" is fine when both bounds are numbers.
	for (const f of findAll(text, words(VAGUE_WORDS))) {
		const w = f.text.toLowerCase();
		if (w === 'any' || w === 'some' || w === 'each') {
			const tail = text.slice(f.end, f.end + 60).split(/[.;:]\s/)[0];
			const boundedHere = [...numericIntervals, ...betweens].some(
				(i) => i.start >= f.end && i.start <= f.end + tail.length
			);
			if (boundedHere) continue;
		}
		if (w === 'well' && /^\s*(?:-|as\b)/i.test(text.slice(f.end))) continue; // "as well as", "well-damped"
		add('vague', f, `"${f.text}" is vague: say exactly how much, which or when.`);
	}

	for (const f of findAll(text, words(ESCAPE_CLAUSES))) {
		add('escape-clause', f, `"${f.text}" is an escape clause: it makes the requirement unverifiable.`);
	}
	const openEnds = findAll(
		text,
		/(?<![\w-])(?:etc\.?|and so on|including but not limited to|not limited to|and\/or)(?![\w-])/gi
	);
	for (const f of openEnds)
		add('open-ending', f, `"${f.text}" leaves the requirement open-ended: list every case.`);
	for (const f of findAll(text, words(SUPERFLUOUS_INFINITIVES))) {
		add(
			'superfluous-infinitive',
			f,
			`"${f.text}" is superfluous: say what it shall do ("shall remain stable").`
		);
	}

	// Several thoughts: "and" inside "between X and Y" joins the bounds of one range, not two thoughts.
	for (const f of findAll(text, words(COMBINATORS))) {
		if (openEnds.some((o) => overlaps(f, o))) continue;
		if (betweens.some((b) => overlaps(f, b))) continue;
		if (
			/^and$/i.test(f.text) &&
			/\bbetween\s+\S+(?:\s+\S+)?\s*$/i.test(text.slice(Math.max(0, f.start - 40), f.start))
		)
			continue;
		add('several-thoughts', f, `"${f.text}" may join two thoughts: one requirement, one thought.`);
	}

	for (const f of findAll(text, words(NEGATIVES))) {
		if (openEnds.some((o) => overlaps(f, o))) continue;
		add('negative', f, `"${f.text}": state what shall happen, not what shall not.`);
	}
	for (const f of findAll(text, words(PRONOUNS))) {
		add('pronoun', f, `"${f.text}" is a pronoun: name the thing it stands for.`);
	}
	for (const f of findAll(text, words(PURPOSE_PHRASES))) {
		add('purpose-phrase', f, `"${f.text}" introduces a purpose: move the reason to the rationale.`);
	}

	// Ranges with a symbolic bound ("[k1, k2]") are not verifiable until the bounds are numbers.
	for (const i of intervals) {
		if (!i.numeric && /[A-Za-z]/.test(i.bounds.join(''))) {
			add(
				'range-symbolic',
				i,
				`The range ${cut(i.text)} has a bound that is not a number: give both bounds.`
			);
		}
	}

	// Numbers need a unit, or must be the bounds of a range ([INCOSE] R33/R34, [NASA-C] "verifiable").
	const inRange = [...intervals, ...betweens];
	for (const m of text.matchAll(NUMBER_RE)) {
		if (m.index === undefined) continue;
		const f: Found = { start: m.index, end: m.index + m[0].length, text: m[0] };
		if (inRange.some((r) => overlaps(f, r))) continue;
		const rest = text.slice(f.end);
		if (UNIT_AFTER.test(rest)) continue;
		// "-50 %/+80 %" and "6 dB / 45°" carry units; "1:2" ratios and "2nd" ordinals are not measures.
		if (/^(?:st|nd|rd|th)\b/i.test(rest) || /^:\d/.test(rest)) continue;
		if (/^\s?[A-Za-z]/.test(rest) && /^\s?[A-Za-z]+-/.test(rest)) continue; // "3-axis"
		// A small whole number after a noun names an item ("rotor 1", "mode 2"), unless the word before
		// it asks for a quantity ("of 2", "below 3", "have 4").
		if (/^\d{1,2}$/.test(f.text)) {
			const before = /([A-Za-z]+)\s+$/
				.exec(text.slice(Math.max(0, f.start - 30), f.start))?.[1]
				?.toLowerCase();
			if (before && !QUANTITY_WORDS.has(before)) continue;
		}
		add(
			'number-unit',
			f,
			`${f.text} has no unit and is not a bound of a range: add the unit, or give the range.`
		);
	}

	// [EARS]: an "If" sentence (unwanted behaviour) needs its "then".
	if (/^\s*if\b/i.test(text) && !/\bthen\b/i.test(text)) {
		add(
			'ears-if-then',
			null,
			'An "If ..." requirement (EARS unwanted behaviour) reads "If <trigger>, then the <system> shall <response>".'
		);
	}

	hints.sort((a, b) => (a.span?.[0] ?? -1) - (b.span?.[0] ?? -1));
	return hints;
}

/** The blockers of approval among the hints (placeholders). */
export function approvalBlockers(statement: string): QualityHint[] {
	return qualityHints(statement).filter((h) => h.severity === 'blocker');
}

/** Short labels of the rules, for the hint list. */
export const RULE_LABELS: Record<string, string> = {
	'one-shall': 'One “shall”',
	'shall-not-will': '“shall”, not will/should',
	placeholder: 'Placeholder',
	vague: 'Vague word',
	'escape-clause': 'Escape clause',
	'open-ending': 'Open ending',
	'superfluous-infinitive': 'Superfluous infinitive',
	'several-thoughts': 'Several thoughts',
	negative: 'Negative',
	pronoun: 'Pronoun',
	'purpose-phrase': 'Purpose phrase',
	'range-symbolic': 'Range bound',
	'number-unit': 'Number without unit',
	'ears-if-then': 'EARS shape'
};
