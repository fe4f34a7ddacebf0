import type { Knex } from 'knex';
import type { Actor } from '../audit';
import { processRun } from '../analyses/run';
import { createModel, publishVersion } from '../models/service';
import { hashPassword } from '../passwords';
import { addLink, createRequirement, setSpecification } from '../requirements/service';
import { DEMO_ACCOUNTS, DEMO_PASSWORD, DEMO_PROJECT } from './accounts';
import { placeholdersIn } from '../../verification/placeholders';
import { DEMO_MODELS, DEMO_REQUIREMENTS, type DemoRequirement } from './scenario';
import {
	seedRelease,
	seedReviews,
	seedRevisionInReview,
	seedTorsionFinding,
	type DemoPeople
} from './signoff';

/**
 * Seed the demo scenario into an empty database, through the same services the app uses (so every
 * step has its audit event, hashes and queued runs). Returns false when there was data already.
 *
 * The first version of every model is analysed here, synchronously; then the requirements are reviewed
 * and the preliminary-design baseline is released (signed), with what was open at that point deferred
 * by signature. Requirements that still hold a placeholder come after the baseline (they are last in
 * the scenario, so the identifiers do not move). The wing-tilt model's second version (the torsion
 * mode) is analysed here too, so its failing verdict has opened its finding (with its mail) and the
 * analyst has taken it up; any other later version is left queued for the worker `npm start` launches.
 */
/** The demo's mapping of identity-provider groups to roles in VX7 (README: single sign-on). */
const DEMO_GROUP_ROLES = [
	['vx7-engineering', 'engineer'],
	['vx7-analysis', 'analyst'],
	['vx7-certification', 'certifier'],
	['vx7-readers', 'viewer']
] as const;

export async function seedDemo(knex: Knex): Promise<boolean> {
	const existing = await knex('users').count<{ count: number }[]>('* as count');
	if (Number(existing[0].count) > 0) return false;
	const hash = await hashPassword(DEMO_PASSWORD);
	const ids: Record<string, { id: number; email: string }> = {};
	const project = await knex.transaction(async (trx) => {
		const [p] = await trx('projects').insert(DEMO_PROJECT).returning('*');
		for (const a of DEMO_ACCOUNTS) {
			const [u] = await trx('users')
				.insert({ email: a.email, display_name: a.name, password_hash: hash, site_admin: a.admin })
				.returning('*');
			ids[a.role ?? 'admin'] = { id: u.id, email: u.email };
			if (a.role) await trx('memberships').insert({ user_id: u.id, project_id: p.id, role: a.role });
		}
		// Roles for the people of the identity-provider stand-in (fakes/oidc-users.ts), by their groups.
		for (const [group_name, role] of DEMO_GROUP_ROLES)
			await trx('sso_group_roles').insert({ project_id: p.id, group_name, role });
		return p as { id: number; key: string };
	});
	const as = (role: string): Actor => ({ userId: ids[role].id, label: ids[role].email });
	const analyst = as('analyst');
	const engineer = as('engineer');

	// Models and their first versions.
	const modelIds: Record<string, number> = {};
	for (const m of DEMO_MODELS) {
		const row = await createModel(analyst, project.id, { name: m.name, description: m.description });
		modelIds[m.key] = row.id;
		await publishVersion(analyst, project.id, row.id, m.versions[0]);
	}

	// Requirements, derived-from links and specifications (these queue the first runs).
	const reqIds: Record<string, number> = {};
	const later = (r: DemoRequirement) => placeholdersIn(r.statement).length > 0;
	const addRequirement = async (r: DemoRequirement) => {
		const created = await createRequirement(engineer, project, {
			title: r.title,
			statement: r.statement,
			rationale: r.rationale,
			level: r.level,
			assuranceLevel: r.dal,
			methods: r.methods,
			ownerId: ids.engineer.id,
			status: 'draft',
			changeNote: 'Demo scenario'
		});
		reqIds[r.ref] = Number(created.id);
		for (const parent of r.parents) await addLink(engineer, reqIds[r.ref], reqIds[parent]);
		if (r.spec) {
			await setSpecification(engineer, reqIds[r.ref], {
				check: r.spec.check as never,
				requiredMargin: r.spec.requiredMargin ?? null,
				operatingPoints: null,
				modelId: modelIds[r.spec.model],
				modelVersionId: null,
				template: r.spec.template ?? null
			});
		}
	};
	const settle = async () => {
		const queued = await knex('analysis_runs').where({ status: 'queued' }).orderBy('id').pluck('id');
		for (const id of queued) await processRun(Number(id), 'demo seed');
	};
	for (const r of DEMO_REQUIREMENTS.filter((x) => !later(x))) await addRequirement(r);
	await settle();

	// Review states, the deferred finding and the released baseline (demo/signoff.ts).
	const people: DemoPeople = { engineer: ids.engineer, analyst: ids.analyst, certifier: ids.certifier };
	const reviewed = DEMO_REQUIREMENTS.filter((x) => !later(x)).map((ref) => ({ ref, id: reqIds[ref.ref] }));
	await seedReviews(knex, people, reviewed);
	await seedRelease(knex, project.id, people, reqIds.D5 ?? reviewed[0].id);
	await seedRevisionInReview(people, reqIds.D5 ?? reviewed[0].id);
	for (const r of DEMO_REQUIREMENTS.filter(later)) await addRequirement(r);
	await settle();

	// The later versions: the wing-tilt torsion mode analysed now, the others left for the worker.
	for (const m of DEMO_MODELS) {
		for (const v of m.versions.slice(1)) await publishVersion(analyst, project.id, modelIds[m.key], v);
		if (m.key === 'tilt' && m.versions.length > 1) await settle();
	}
	await seedTorsionFinding(knex, project.id, people);
	return true;
}
