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
// 2.1.0: discrete-time loops (sampleTime in z, zero-order hold with a bounded error, Jury's test, the discrete
// circle criterion, its largest sector and the Tsypkin criterion); "delay" and "discretize" are known model
// fields (a delay above 0 is refused for now), matrix sizes and check/domain mismatches named; the
// multivariable circle criterion with a matrix sector {K1, K2} on square ss plants (D = 0); existing
// verdicts unchanged.
export const ENGINE_VERSION = '2.1.0';
