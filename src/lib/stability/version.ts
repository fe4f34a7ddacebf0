/**
 * Version of the stability engine, recorded with every analysis run so a verdict can be traced to the
 * code that produced it (DOMAIN.md section 6: a verdict is stale once the engine version changes).
 * Bump rules (semantic versioning):
 * - MAJOR: a verdict, class or certified threshold can change for some input (decision method changed),
 *   or a result field is removed or renamed.
 * - MINOR: new checks, new result fields, new accepted input forms; existing verdicts unchanged.
 * - PATCH: wording of explanations, performance, reported numerical values (estimates, frequencies)
 *   changing within their stated accuracy; no verdict or certified threshold changes.
 */
export const ENGINE_VERSION = '1.0.0';
