import type { Knex } from 'knex';
import type { Actor } from '../audit';
import { processRun } from '../analyses/run';
import { createModel, publishVersion } from '../models/service';
import { hashPassword } from '../passwords';
import { addLink, createRequirement, setSpecification } from '../requirements/service';
import { DEMO_ACCOUNTS, DEMO_PASSWORD, DEMO_PROJECT } from './accounts';
import { DEMO_MODELS, DEMO_REQUIREMENTS } from './scenario';

/**
 * Seed the demo scenario into an empty database, through the same services the app uses (so every
 * step has its audit event, hashes and queued runs). Returns false when there was data already.
 *
 * The first version of every model is analysed here, synchronously; the later versions are published
 * last and left queued, so the worker that `npm start` launches re-verifies them in front of the user,
 * and the wing-tilt requirement turns from verified to failing and sends its mail.
 */
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
	for (const r of DEMO_REQUIREMENTS) {
		const created = await createRequirement(engineer, project, {
			title: r.title,
			statement: r.statement,
			rationale: r.rationale,
			level: r.level,
			assuranceLevel: r.dal,
			methods: r.methods,
			ownerId: ids.engineer.id,
			status: r.status,
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
	}
	const queued = await knex('analysis_runs').where({ status: 'queued' }).orderBy('id').pluck('id');
	for (const id of queued) await processRun(Number(id), 'demo seed');

	// The later versions, left for the worker.
	for (const m of DEMO_MODELS) {
		for (const v of m.versions.slice(1)) await publishVersion(analyst, project.id, modelIds[m.key], v);
	}
	return true;
}
