import type { Knex } from 'knex';
import type { Actor } from '../audit';
import { freeze } from '../baselines/service';
import { changeFinding, raiseFinding } from '../findings/service';
import { confirmSigner, type Signer } from '../identity/reauth';
import { ServiceError } from '../errors';
import { addComment, decideReview, requestReview } from '../requirements/review';
import { reviseRequirement } from '../requirements/service';
import { DEMO_PASSWORD } from './accounts';
import type { DemoRequirement } from './scenario';

// The sign-off part of the demo, through the same services and signatures as the app (the demo
// password is re-entered at each signature, as a person would): requirements in each review state,
// a deferred finding with its signature, a released baseline, and the open finding the wing-tilt
// torsion mode raises once the worker's re-run fails.

export interface DemoPeople {
	engineer: { id: number; email: string };
	analyst: { id: number; email: string };
	certifier: { id: number; email: string };
}

const actor = (u: { id: number; email: string }): Actor => ({ userId: u.id, label: u.email });

async function signer(knex: Knex, u: { id: number; email: string }): Promise<Signer> {
	const row = await knex('users').where({ id: u.id }).first('display_name');
	return {
		id: u.id,
		email: u.email,
		name: row.display_name,
		confirmation: await confirmSigner(null, u, { password: DEMO_PASSWORD })
	};
}

/** Review states as the scenario gives them; the first requirement meant for review is returned instead. */
export async function seedReviews(
	knex: Knex,
	people: DemoPeople,
	reqs: { ref: DemoRequirement; id: number }[]
): Promise<void> {
	const eng = actor(people.engineer);
	const cert = actor(people.certifier);
	let returned = false;
	for (const { ref, id } of reqs) {
		if (ref.status === 'draft') continue;
		const reviewers =
			ref.status === 'approved' ? [people.certifier.id] : [people.certifier.id, people.analyst.id];
		await requestReview(eng, id, { revision: 1, reviewers });
		if (ref.status === 'in-review' && !returned) {
			returned = true;
			await decideReview(
				cert,
				'certifier',
				id,
				{
					revision: 1,
					decision: 'return',
					comment:
						'The second sentence is a design constraint, not a stability requirement: move it to the rationale.'
				},
				await signer(knex, people.certifier)
			);
			const [first] = await knex('review_comments').where({ requirement_id: id }).orderBy('id').pluck('id');
			await addComment(eng, id, {
				revision: 1,
				parentId: Number(first),
				body: 'Agreed; revision 2 will keep one shall-statement and move the constraint to the rationale.'
			});
			continue;
		}
		if (ref.status !== 'approved') continue;
		try {
			await decideReview(
				cert,
				'certifier',
				id,
				{ revision: 1, decision: 'approve', comment: '' },
				await signer(knex, people.certifier)
			);
		} catch (e) {
			// A requirement whose text has a blocker stays in review: the demo shows that refusal too.
			if (!(e instanceof ServiceError) || e.status !== 422) throw e;
		}
	}
}

/**
 * Every open finding at the preliminary design review is deferred by the certifier's signature (each
 * with its justification and target date), one is raised by hand and deferred too, and the baseline
 * is released (signed, with the manifest's SHA-256).
 */
export async function seedRelease(
	knex: Knex,
	projectId: number,
	people: DemoPeople,
	yawRequirementId: number
) {
	const cert = actor(people.certifier);
	await raiseFinding(actor(people.analyst), projectId, {
		requirementId: yawRequirementId,
		title: 'Yaw damper margins rest on the cruise linearisation only',
		description: 'The hover-to-cruise transition points are not yet in the yaw model.',
		assigneeId: people.analyst.id
	});
	const open = await knex('findings')
		.where({ project_id: projectId })
		.whereIn('state', ['open', 'in-work', 'resolved']);
	for (const f of open)
		await changeFinding(
			cert,
			'certifier',
			Number(f.id),
			{
				version: f.version,
				state: 'deferred',
				justification:
					'Accepted for the preliminary design review: the transition linearisations come with the next model release.',
				targetDate: '2027-03-31'
			},
			await signer(knex, people.certifier)
		);
	return freeze(
		cert,
		projectId,
		{ label: 'Preliminary design review', note: 'Demo baseline: released with one deferred finding.' },
		{ role: 'certifier', signer: await signer(knex, people.certifier) }
	);
}

/** The analyst takes up the torsion-mode finding: its history shows it opened by the run, then in work. */
export async function seedTorsionFinding(knex: Knex, projectId: number, people: DemoPeople) {
	const f = await knex('findings')
		.where({ project_id: projectId, cause: 'analysis', state: 'open' })
		.whereILike('title', '%wing-tilt%')
		.orderBy('id')
		.first();
	if (!f) return;
	await changeFinding(
		actor(people.analyst),
		'analyst',
		Number(f.id),
		{ version: f.version, state: 'in-work' },
		null
	);
}

/**
 * After the release the engineer revises an approved requirement and asks for its review: revision 2 is
 * in review while revision 1 stays approved and in force, and the approval shows on revision 1 only.
 */
export async function seedRevisionInReview(people: DemoPeople, requirementId: number) {
	const eng = actor(people.engineer);
	const r = await reviseRequirement(eng, requirementId, {
		revision: 1,
		rationale: 'Flight phases from the flight envelope document, issue C (adds the 80 kn transition point).',
		changeNote: 'Rationale follows the new envelope issue.'
	} as never);
	await requestReview(eng, requirementId, {
		revision: r.revision,
		reviewers: [people.certifier.id, people.analyst.id]
	});
}
