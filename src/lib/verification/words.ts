// Words shared by every surface that shows a verification state.
import type { Tone } from './analysis';
import { PLACEHOLDER_WORDS } from './placeholders';

/** Badge classes of the theme (src/app.css) per tone. */
export const TONE_CLASS: Record<Tone, string> = {
	ok: 'border-ok bg-ok-soft text-ok',
	bad: 'border-bad bg-bad-soft text-bad',
	wait: 'border-wait bg-wait-soft text-wait',
	unsure: 'border-unsure bg-unsure-soft text-unsure',
	none: 'border-rule bg-paper text-ink-soft'
};

export const LEVEL_LABELS: Record<string, string> = {
	system: 'System',
	subsystem: 'Subsystem',
	loop: 'Loop'
};

/**
 * The roll-up rule in words, for the methods page and the export's cover sheet (the rule itself is
 * verificationStates() in ./state.ts).
 */
export const ROLL_UP_RULE = [
	'A requirement is verified when every verification method it names is satisfied (analysis: the run of its current inputs proved it; test, inspection, demonstration: accepted evidence of that method) and nothing blocks it.',
	'A requirement with derived requirements is verified through them when every derived requirement that is not retired is verified and whatever it verifies itself (its own specification, its own evidence) is satisfied; a method it has nothing of its own for is covered by its derived requirements. Coverage counts each requirement once and says whether it is verified directly, through its derived requirements, or both.',
	'A derived requirement that is not verified blocks every ancestor, which names it ("a derived requirement is not verified") and links to it.',
	`Blockers: the statement and the specification disagree; a placeholder (${PLACEHOLDER_WORDS.join(', ')}) in the statement; an analysis not proved, not applicable, inconclusive or in error; a run pending or from an earlier engine version; evidence awaiting review or rejected.`,
	'"Not proved" means the criterion’s condition is violated for the required sector; "criterion not applicable" means one of its preconditions fails. Both block verification; neither is a proof of instability, because the circle and Popov criteria are sufficient, not necessary (Khalil, Nonlinear Systems, 3rd ed., section 7.1).'
] as const;

/** "1 requirement blocks a baseline", "3 requirements block a baseline". */
export function freezeBlockedSentence(n: number): string {
	return n === 1 ? '1 requirement blocks a baseline' : `${n} requirements block a baseline`;
}
