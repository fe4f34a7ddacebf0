// Per-project roles and the one table of what each may do. access() in ../auth.ts checks a route's
// capability against this table, and returns the flags computed from it, which every page uses for
// its buttons: what a page offers and what the server allows cannot drift apart.
export const ROLES = ['engineer', 'analyst', 'certifier', 'viewer'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
	engineer: 'Engineer — writes requirements',
	analyst: 'Analyst — models and analyses',
	certifier: 'Certifier — reviews evidence, baselines, exports',
	viewer: 'Viewer — reads everything, changes nothing'
};

export function isRole(v: unknown): v is Role {
	return typeof v === 'string' && (ROLES as readonly string[]).includes(v);
}

/**
 * Who may do what in a project. A signed-in site administrator may do everything (also in a project
 * where they hold a lesser role); an API token acts with its own role only, whoever owns it.
 */
export const CAPABILITIES = {
	/** Read everything in the project, export it, check a file's integrity. */
	read: ['viewer', 'engineer', 'analyst', 'certifier'],
	/** Create and revise requirements, their links and their stability specifications. */
	writeRequirements: ['engineer'],
	/** Create loop models and publish their versions. */
	writeModels: ['analyst'],
	/** Upload evidence and new revisions of it. */
	uploadEvidence: ['engineer', 'analyst', 'certifier'],
	/** Accept or reject evidence. */
	reviewEvidence: ['certifier'],
	/** Set a requirement's model-versus-test tolerance. */
	setTolerance: ['engineer', 'analyst'],
	/** Freeze a baseline. */
	freezeBaselines: ['certifier'],
	/** Generate a data package (report and archive) of a baseline or a draft of the present state. */
	generatePackages: ['certifier'],
	/** Comment on requirement revisions in review; named reviewers approve or return them (signed). */
	reviewRequirements: ['engineer', 'analyst', 'certifier'],
	/** Raise findings by hand, move them open / in work / resolved, reassign them. */
	workFindings: ['engineer', 'analyst', 'certifier'],
	/** Close, defer or declare "not a defect" a finding (signed). */
	decideFindings: ['certifier']
} as const satisfies Record<string, readonly Role[]>;

export type Capability = keyof typeof CAPABILITIES;
export type Capabilities = Record<Capability, boolean>;

/** 'admin' is a site administrator acting through the site-administrator rule, not a member role. */
export type ActingRole = Role | 'admin';

/** Whether a caller with this role may do this. `siteAdmin`: signed in as a site administrator, not through an API token. */
export function allows(role: ActingRole, siteAdmin: boolean, need: Capability): boolean {
	return siteAdmin || role === 'admin' || (CAPABILITIES[need] as readonly Role[]).includes(role);
}

/** Every capability flag for a caller: what the pages offer. */
export function capabilities(role: ActingRole, siteAdmin: boolean): Capabilities {
	const can = {} as Capabilities;
	for (const need of Object.keys(CAPABILITIES) as Capability[]) can[need] = allows(role, siteAdmin, need);
	return can;
}

/** "engineer or analyst": the roles a capability needs, for refusals. */
export function rolesFor(need: Capability): string {
	const roles = CAPABILITIES[need] as readonly string[];
	return roles.length > 1 ? `${roles.slice(0, -1).join(', ')} or ${roles.at(-1)}` : roles[0];
}
