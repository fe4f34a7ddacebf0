// The requirement vocabularies: levels, assurance levels, verification methods and review states.
// One list each, read by the server's schemas (src/lib/server/requirements/schema.ts), the ReqIF
// enumerations (reqif.ts), the spreadsheet import and the filter controls.

export const LEVELS = ['system', 'subsystem', 'loop'] as const;
export const ASSURANCE_LEVELS = ['A', 'B', 'C', 'D', 'E'] as const;
export const METHODS = ['analysis', 'test', 'inspection', 'demonstration'] as const;
/**
 * The review state of a requirement's current revision. Only draft and retired are written with a
 * revision; in review, approved and returned are reached through the review workflow
 * (src/lib/server/requirements/review.ts), with signatures for approving and returning.
 */
export const STATUSES = ['draft', 'in-review', 'approved', 'returned', 'retired'] as const;
