// Result types shared by every check. Results are plain JSON-serialisable data.
//
// Infinity convention: JSON cannot hold Infinity, so an infinite value (for example an unbounded largest
// sector, or an infinite gain margin) is written as the string 'Infinity' everywhere in a result, both in
// the top-level fields and in `numbers`. `null` means "not defined / not applicable" (for example no
// critical frequency because the extremum is approached only as w -> infinity). Inputs accept the same
// spelling ("Infinity", "inf", or null) for an infinite upper sector bound (schema.ts).
//
// Words: results say "proved" (or "exact"), never "certified": Loopwarden is not a qualified tool
// (RTCA DO-330). Fields once named "certified..." keep that name as an alias for one engine version.

export type Verdict = 'pass' | 'fail' | 'inconclusive';
export type PositiveRealClass = 'SPR' | 'PR' | 'neither';
export type NumberOrInf = number | 'Infinity' | '-Infinity';

export interface CheckResult {
	type: 'circle' | 'popov' | 'positive-real' | 'max-sector' | 'margins' | 'tsypkin';
	verdict: Verdict;
	class?: PositiveRealClass;
	/** rad/s; where the deciding quantity is smallest. */
	criticalFrequency?: number | null;
	/** Largest proved upper bound (max-sector, popov); 'Infinity' when unbounded. */
	threshold?: NumberOrInf | null;
	/** Popov multiplier that proves the sector. */
	q?: number | null;
	/** Check-specific margin (see `numbers` for the named quantities). */
	margin?: NumberOrInf | null;
	/** Gains k for which 1 + kG is stable, as [low, high] intervals ('Infinity' / '-Infinity' ends). */
	linearGainIntervals?: [NumberOrInf, NumberOrInf][];
	numbers: Record<string, number | string | null>;
	/** One sentence, in the user's words. */
	explanation: string;
	/** Why the verdict is inconclusive (or which condition decided a fail). */
	reason?: string;
	assumptions?: string;
	/**
	 * Set when the verdict is not a pass because a precondition of the criterion fails (not its condition):
	 * which precondition, and what would make the criterion applicable. Absent otherwise.
	 */
	notApplicable?: { precondition: string; remedy: string };
}

/** Encode a number for JSON under the Infinity convention above; NaN becomes null. */
export function enc(x: number | null | undefined): NumberOrInf | null {
	if (x === null || x === undefined || Number.isNaN(x)) return null;
	if (x === Infinity) return 'Infinity';
	if (x === -Infinity) return '-Infinity';
	return x;
}
