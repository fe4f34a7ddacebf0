// Per-project roles. What each may do is decided by the one guard (requireRole in ../auth.ts),
// with the list of allowed roles written at each load, action and endpoint.
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
