/**
 * Version of the stability engine, recorded with every analysis run so a verdict can be traced to the
 * code that produced it (a verdict is stale once the engine version changes).
 * Bump rules (semantic versioning):
 * - MAJOR: a verdict, class or proved threshold can change for some input (decision method changed),
 *   or a result field is removed or renamed.
 * - MINOR: new checks, new result fields, new accepted input forms; existing verdicts unchanged.
 * - PATCH: wording of explanations, performance, reported numerical values (estimates, frequencies)
 *   changing within their stated accuracy; no verdict or proved threshold changes.
 */
// 2.0.0: well-posedness and hidden modes decided before every criterion, unbounded largest sectors,
// unknown input fields refused (verdicts change for such inputs); "certified..." fields renamed "proved...",
// the old names kept as aliases for this version.
// 2.0.1: min Re G of the positive-real check from the exact stationary points of Re G (frequency.ts);
// linear gain range ends from exactly isolated axis crossings, the gains evaluated exactly there.
export const ENGINE_VERSION = '2.0.1';
