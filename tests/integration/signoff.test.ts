import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
	addMember,
	closeTestDb,
	createModel,
	createModelVersion,
	createRequirement,
	createRun,
	createSpec,
	createTeam,
	createUser,
	testDb
} from '../factories';
import { signedIn, type Client } from '../helpers/http';
import { expectMailTo } from '../helpers/mail';
import { evidenceForm, postForm } from './evidence/fixtures';
import { CUBE, LAG, points, settled, waitFor } from './models/helpers';
import { verifyChain } from '../../src/lib/server/audit';
import { closeDb } from '../../src/lib/server/db';
import { reviewOf, setIndependence } from '../../src/lib/server/requirements/review';
import { ENGINE_VERSION } from '../../src/lib/stability/index';

// Issue 15: signed acts (requirement approve/return, evidence accept/reject, finding close/defer/not a
// defect, baseline release), the review workflow's independence rules, findings opened and closed by
// runs and evidence, the freeze rule, the findings API's optimistic concurrency, the audit chain.

let team: Awaited<ReturnType<typeof createTeam>>;
let eng: Client;
let ana: Client;
let cert: Client;
let eng2: { id: number; email: string; password: string };
let eng2c: Client;
const key = () => team.project.key;

beforeAll(async () => {
	team = await createTeam();
	eng = await signedIn(team.users.engineer.email, team.users.engineer.password);
	ana = await signedIn(team.users.analyst.email, team.users.analyst.password);
	cert = await signedIn(team.users.certifier.email, team.users.certifier.password);
	eng2 = await createUser({ name: 'Second engineer' });
	await addMember(eng2.id, team.project.id, 'engineer');
	eng2c = await signedIn(eng2.email, eng2.password);
});
afterAll(async () => {
	await closeDb();
	await closeTestDb();
});

const signatures = async () => Number((await testDb()('signatures').count('* as n').first())?.n);

/** A requirement written through the API by the engineer (its author), with a specification on a model of the analyst. */
async function authored(o: { level?: string; ownerId?: number; statement?: string } = {}) {
	const res = await eng.json(`/api/v1/projects/${key()}/requirements`, 'POST', {
		title: 'Signed requirement',
		statement: o.statement ?? 'The loop shall remain absolutely stable for every gain in the sector [0, 3].',
		level: 'loop',
		assuranceLevel: o.level ?? 'B',
		methods: ['analysis'],
		ownerId: o.ownerId ?? team.users.engineer.id
	});
	expect(res.status, await res.clone().text()).toBe(201);
	const id = (await res.json()).requirement.id as number;
	const model = await createModel(team.project.id, { ownerId: team.users.analyst.id });
	await createSpec(id, { modelId: model.id, check: { type: 'circle', sector: [0, 3] } });
	return id;
}

const page = (id: number) => `/p/${key()}/requirements/${id}`;
/** Name reviewers the way the form does (a checkbox per person, all named "reviewers"). */
async function requestReview(id: number, reviewers: number[], revision = 1) {
	const fd = new URLSearchParams({ revision: String(revision) });
	for (const r of reviewers) fd.append('reviewers', String(r));
	const res = await eng.request(`${page(id)}?/requestReview`, {
		method: 'POST',
		headers: {
			'content-type': 'application/x-www-form-urlencoded',
			accept: 'application/json',
			'x-sveltekit-action': 'true'
		},
		body: fd
	});
	const body = await res.json();
	expect(body.type, JSON.stringify(body)).toBe('success');
}

const decide = (
	c: Client,
	id: number,
	decision: 'approve' | 'return',
	password: string,
	comment = '',
	revision = 1
) => c.action(`${page(id)}?/decide`, { revision: String(revision), decision, comment, password });

const state = async (id: number) =>
	await testDb()('requirements').where({ id }).first('review_state', 'approved_revision', 'current_revision');

describe('requirement review', () => {
	it('approval is signed; a wrong password is refused with nothing changed', async () => {
		const id = await authored();
		await requestReview(id, [team.users.certifier.id]);
		const before = await signatures();
		const wrong = await decide(cert, id, 'approve', 'not-the-password');
		expect(wrong.type).toBe('failure');
		expect(wrong.status).toBe(400);
		expect((wrong.data?.errors as Record<string, string>).password).toBeTruthy();
		expect(await signatures()).toBe(before);
		expect(await state(id)).toMatchObject({ review_state: 'in-review', approved_revision: null });

		const ok = await decide(cert, id, 'approve', team.users.certifier.password);
		expect(ok.type, JSON.stringify(ok.data)).toBe('success');
		expect(await state(id)).toMatchObject({ review_state: 'approved', approved_revision: 1 });
		const sig = await testDb()('signatures').where({ target_type: 'requirement', target_id: id }).first();
		expect(sig).toMatchObject({
			act: 'requirement.approve',
			target_revision: 1,
			signer_email: team.users.certifier.email,
			meaning: 'I approve this requirement revision as correct and verifiable.',
			confirmed_by: 'password'
		});
		expect(sig.content_sha256).toMatch(/^[0-9a-f]{64}$/);
		expect(sig.content.statement).toMatch(/sector \[0, 3\]/);
	});

	it('a signature on revision 1 does not appear on revision 2; revision 1 stays in force', async () => {
		const id = await authored();
		await requestReview(id, [team.users.certifier.id]);
		expect((await decide(cert, id, 'approve', team.users.certifier.password)).type).toBe('success');
		const edit = await eng.json(`/api/v1/requirements/${id}`, 'PATCH', {
			revision: 1,
			title: 'Edited title'
		});
		expect(edit.status).toBe(200);
		expect(await state(id)).toMatchObject({
			review_state: 'draft',
			approved_revision: 1,
			current_revision: 2
		});
		const review = await reviewOf(id);
		const r1 = review.perRevision.find((p) => p.revision === 1)!;
		expect(r1.signatures).toHaveLength(1);
		expect(r1.signatures[0]).toMatchObject({ current: false, revision: 1 });
		expect(r1.signatures[0].appliesTo).toBe(
			'applies to the earlier revision 1, not to the current revision 2'
		);
		expect(review.perRevision.find((p) => p.revision === 2)).toBeUndefined();
		expect(review.signatures.filter((s) => s.current)).toEqual([]);
		const html = await (await eng.get(page(id), { accept: 'text/html' })).text();
		expect(html).toContain('applies to the earlier revision 1, not to the current revision 2');
		expect(html).toContain(
			'Revision 1 stays approved and in force for baselines until this one is approved.'
		);
	});

	it('the author cannot approve their own revision, nor name themselves as reviewer', async () => {
		const id = await authored();
		const self = await eng.action(`${page(id)}?/requestReview`, {
			revision: '1',
			reviewers: String(team.users.engineer.id)
		});
		expect(self.status).toBe(422);
		await requestReview(id, [team.users.certifier.id]);
		const own = await decide(eng, id, 'approve', team.users.engineer.password);
		expect(own.type).toBe('failure');
		expect(own.status).toBe(403);
		expect((own.data?.errors as Record<string, string>)._).toMatch(/author cannot approve/);
		expect(await state(id)).toMatchObject({ review_state: 'in-review', approved_revision: null });
	});

	it('levels A and B need an approver who is neither the owner nor the model analyst; C does not', async () => {
		// Owner: the certifier; the model belongs to the analyst. Reviewers: both of them and a second engineer.
		const a = await authored({ level: 'A', ownerId: team.users.certifier.id });
		await requestReview(a, [team.users.certifier.id, team.users.analyst.id, eng2.id]);
		const byOwner = await decide(cert, a, 'approve', team.users.certifier.password);
		expect(byOwner.data).toMatchObject({ state: 'in-review', missing: 1 });
		const byAnalyst = await decide(ana, a, 'approve', team.users.analyst.password);
		expect(byAnalyst.data).toMatchObject({ state: 'in-review', missing: 1 });
		expect(await state(a)).toMatchObject({ review_state: 'in-review' });
		const independent = await decide(eng2c, a, 'approve', eng2.password);
		expect(independent.data).toMatchObject({ state: 'approved', missing: 0 });
		expect(await state(a)).toMatchObject({ review_state: 'approved', approved_revision: 1 });

		const c = await authored({ level: 'C', ownerId: team.users.certifier.id });
		await requestReview(c, [team.users.certifier.id]);
		expect((await decide(cert, c, 'approve', team.users.certifier.password)).data).toMatchObject({
			state: 'approved'
		});

		// The project administrator tightens it: every level, two independent approvers.
		await setIndependence({ label: 'test' }, team.project.id, { rule: 'all', approvals: '2' });
		try {
			const c2 = await authored({ level: 'C', ownerId: team.users.certifier.id });
			await requestReview(c2, [team.users.certifier.id, eng2.id]);
			expect((await decide(cert, c2, 'approve', team.users.certifier.password)).data).toMatchObject({
				state: 'in-review',
				missing: 2
			});
			expect((await decide(eng2c, c2, 'approve', eng2.password)).data).toMatchObject({
				state: 'in-review',
				missing: 1
			});
		} finally {
			await setIndependence({ label: 'test' }, team.project.id, { rule: 'a-b', approvals: '1' });
		}
	});

	it('approval is refused while the verification state has a placeholder; a return is signed with its comment', async () => {
		const id = await authored({
			statement: 'The loop shall remain absolutely stable for every gain in [0, TBD].'
		});
		await requestReview(id, [team.users.certifier.id]);
		const refused = await decide(cert, id, 'approve', team.users.certifier.password);
		expect(refused.status).toBe(422);
		expect((refused.data?.errors as Record<string, string>)._).toMatch(/placeholder "TBD"/);
		expect(await state(id)).toMatchObject({ review_state: 'in-review' });
		const noComment = await decide(cert, id, 'return', team.users.certifier.password);
		expect(noComment.status).toBe(422);
		const back = await decide(cert, id, 'return', team.users.certifier.password, 'Replace TBD by the limit.');
		expect(back.data).toMatchObject({ state: 'returned' });
		const review = await reviewOf(id);
		expect(review.perRevision[0].comments.map((c) => c.body)).toEqual(['Replace TBD by the limit.']);
		expect(review.perRevision[0].signatures[0]).toMatchObject({ act: 'requirement.return', current: true });
		// Threaded: a reply to the return's comment.
		const reply = await eng.action(`${page(id)}?/comment`, {
			revision: '1',
			parentId: String(review.perRevision[0].comments[0].id),
			body: 'Done in revision 2.'
		});
		expect(reply.type).toBe('success');
		expect((await reviewOf(id)).perRevision[0].comments[0].replies.map((c) => c.body)).toEqual([
			'Done in revision 2.'
		]);
	});
});

describe('findings', () => {
	async function newModel(name: string): Promise<number> {
		const res = await ana.json(`/api/v1/projects/${key()}/models`, 'POST', {
			name,
			description: 'finding test'
		});
		expect(res.status).toBe(201);
		return (await res.json()).id;
	}
	const publish = async (modelId: number, model: unknown) => {
		const res = await ana.json(`/api/v1/projects/${key()}/models/${modelId}/versions`, 'POST', {
			note: 'test',
			operatingPoints: points(model)
		});
		expect(res.status).toBe(201);
	};

	it('a failing publish opens a finding (assigned to the model owner, mailed); a passing one closes it', async () => {
		const modelId = await newModel('Finding loop');
		const r = await createRequirement(team.project.id, { ownerId: team.users.engineer.id, assurance: 'A' });
		// 1/(s+1)^3 under [0, 5]: not proved (Re G(jw) >= -1/4, so k2 < 4: ./models/helpers.ts).
		await createSpec(r.id, { modelId, check: { type: 'circle', sector: [0, 5] } });
		await publish(modelId, CUBE);
		await settled([r.id]);
		const f = await waitFor('the finding', () =>
			testDb()('findings').where({ requirement_id: r.id, cause: 'analysis' }).first()
		);
		expect(f).toMatchObject({ state: 'open', assurance_level: 'A', assignee_id: team.users.analyst.id });
		expect(f.run_id).not.toBeNull();
		await expectMailTo(team.users.analyst.email, { subject: new RegExp(`Finding F-${f.number}: opened`) });
		// 1/(s+1) under [0, 5]: Re G(jw) > 0, proved; the finding closes by itself, linked to that run.
		await publish(modelId, LAG);
		await settled([r.id]);
		const closed = await waitFor('the finding to close', async () => {
			const x = await testDb()('findings').where({ id: f.id }).first();
			return x.state === 'closed' ? x : null;
		});
		const run = await testDb()('analysis_runs').where({ id: closed.cleared_by_run_id }).first();
		expect(run).toMatchObject({ requirement_id: r.id, verdict: 'pass' });
		const actions = (
			await testDb()('audit_events').where({ subject_type: 'finding', subject_id: String(f.id) })
		).map((e) => e.action);
		expect(actions).toEqual(['finding.open', 'finding.cleared']);
	});

	it('rejected evidence opens a finding for the uploader; accepting a later revision closes it; wrong passwords change nothing', async () => {
		const r = await createRequirement(team.project.id, {
			methods: ['test'],
			ownerId: team.users.engineer.id
		});
		const up = await postForm(
			eng,
			`/api/v1/projects/${key()}/evidence`,
			evidenceForm(
				{ title: 'Rig log', kind: 'log', method: 'test', requirementIds: r.identifier },
				{ name: 'rig.txt', bytes: Buffer.from('rig log 1\n'), type: 'text/plain' }
			)
		);
		expect(up.status, await up.clone().text()).toBe(201);
		const ev = (await up.json()).id as number;
		const review = (body: Record<string, unknown>) =>
			cert.json(`/api/v1/evidence/${ev}/review`, 'POST', body);
		const before = await signatures();
		const wrong = await review({
			decision: 'rejected',
			comment: 'Wrong rig.',
			revision: 1,
			password: 'nope'
		});
		expect(wrong.status).toBe(400);
		expect((await wrong.json()).error.fields.password).toBeTruthy();
		expect(await signatures()).toBe(before);
		expect(
			await testDb()('evidence_reviews as r')
				.join('evidence_files as f', 'f.id', 'r.evidence_file_id')
				.where('f.evidence_id', ev)
		).toEqual([]);
		expect(await testDb()('findings').where({ requirement_id: r.id })).toEqual([]);

		const rej = await review({
			decision: 'rejected',
			comment: 'Wrong rig.',
			revision: 1,
			password: team.users.certifier.password
		});
		expect(rej.status).toBe(201);
		const f = await testDb()('findings').where({ requirement_id: r.id }).first();
		expect(f).toMatchObject({
			cause: 'evidence',
			state: 'open',
			assignee_id: team.users.engineer.id,
			evidence_revision: 1
		});
		const rev2 = await postForm(
			eng,
			`/api/v1/evidence/${ev}/revisions`,
			evidenceForm(
				{ note: 'right rig' },
				{ name: 'rig2.txt', bytes: Buffer.from('rig log 2\n'), type: 'text/plain' }
			)
		);
		expect(rev2.status).toBe(201);
		const acc = await review({
			decision: 'accepted',
			comment: 'Rig 3 as stated.',
			revision: 2,
			password: team.users.certifier.password
		});
		expect(acc.status).toBe(201);
		expect(await testDb()('findings').where({ id: f.id }).first()).toMatchObject({
			state: 'closed',
			cleared_by_evidence_revision: 2
		});
		const sigs = await testDb()('signatures').where({ target_type: 'evidence', target_id: ev }).orderBy('id');
		expect(sigs.map((s) => [s.act, s.target_revision])).toEqual([
			['evidence.reject', 1],
			['evidence.accept', 2]
		]);
		const reviews = await testDb()('evidence_reviews as r')
			.join('evidence_files as f', 'f.id', 'r.evidence_file_id')
			.where('f.evidence_id', ev)
			.orderBy('f.revision')
			.select('r.signature_id', 'r.sha256', 'f.sha256 as file_sha');
		expect(reviews.map((x) => Number(x.signature_id))).toEqual(sigs.map((s) => Number(s.id)));
		expect(sigs[1].content.sha256).toBe(reviews[1].file_sha);
	});

	it('PATCH /api/v1/findings/{id}: 409 on a stale version, signed moves need a certifier and the password', async () => {
		const r = await createRequirement(team.project.id, { ownerId: team.users.engineer.id });
		const raised = await eng.action(`/p/${key()}/findings?/raise`, {
			requirementId: String(r.id),
			title: 'Hand-raised',
			description: 'seen on the rig'
		});
		expect(raised.type).toBe('redirect');
		const f = await testDb()('findings').where({ requirement_id: r.id }).first();
		expect(f).toMatchObject({
			cause: 'manual',
			state: 'open',
			version: 1,
			assignee_id: team.users.engineer.id
		});
		const patch = (c: Client, body: Record<string, unknown>) =>
			c.json(`/api/v1/findings/${f.id}`, 'PATCH', body);

		const work = await patch(eng, { version: 1, state: 'in-work' });
		expect(work.status).toBe(200);
		expect(await work.json()).toMatchObject({ version: 2, state: 'in-work' });
		const stale = await patch(ana, { version: 1, state: 'resolved' });
		expect(stale.status).toBe(409);
		expect((await stale.json()).error).toMatchObject({ currentVersion: 2, state: 'in-work' });
		expect(await testDb()('findings').where({ id: f.id }).first()).toMatchObject({
			state: 'in-work',
			version: 2
		});

		const unknown = await patch(eng, { version: 2, colour: 'red' });
		expect(unknown.status).toBe(400);
		const byEngineer = await patch(eng, {
			version: 2,
			state: 'not-a-defect',
			comment: 'x',
			password: team.users.engineer.password
		});
		expect(byEngineer.status).toBe(403);
		const before = await signatures();
		const wrong = await patch(cert, {
			version: 2,
			state: 'not-a-defect',
			comment: 'Rig wiring.',
			password: 'nope'
		});
		expect(wrong.status).toBe(400);
		expect(await signatures()).toBe(before);
		expect(await testDb()('findings').where({ id: f.id }).first()).toMatchObject({
			state: 'in-work',
			version: 2
		});
		const nad = await patch(cert, {
			version: 2,
			state: 'not-a-defect',
			comment: 'Rig wiring, not the item.',
			password: team.users.certifier.password
		});
		expect(nad.status).toBe(200);
		expect(
			await testDb()('signatures').where({ target_type: 'finding', target_id: f.id }).first()
		).toMatchObject({
			act: 'finding.not-a-defect',
			comment: 'Rig wiring, not the item.'
		});

		const list = await eng.get(`/api/v1/projects/${key()}/findings?state=not-a-defect&requirement=${r.id}`);
		expect((await list.json()).findings.map((x: { id: number }) => x.id)).toEqual([Number(f.id)]);
		expect((await eng.get(`/api/v1/projects/${key()}/findings?state=maybe`)).status).toBe(400);
	});
});

describe('baseline release', () => {
	it('is refused while a finding is open, allowed once it is deferred by signature, and signs the manifest hash', async () => {
		const t = await createTeam();
		const c = await signedIn(t.users.certifier.email, t.users.certifier.password);
		const e = await signedIn(t.users.engineer.email, t.users.engineer.password);
		const r = await createRequirement(t.project.id, { ownerId: t.users.engineer.id, methods: ['analysis'] });
		const m = await createModel(t.project.id);
		await createModelVersion(m.id);
		await createSpec(r.id, { modelId: m.id });
		await createRun(r.id, { engineVersion: ENGINE_VERSION, verdict: 'pass' });
		const raise = await e.action(`/p/${t.project.key}/findings?/raise`, {
			requirementId: String(r.id),
			title: 'Open item'
		});
		expect(raise.type).toBe('redirect');
		const f = await testDb()('findings').where({ requirement_id: r.id }).first();
		const post = (body: Record<string, unknown>) =>
			c.json(`/api/v1/projects/${t.project.key}/baselines`, 'POST', body);

		const wrong = await post({ label: 'PDR', password: 'nope' });
		expect(wrong.status).toBe(400);
		const refused = await post({ label: 'PDR', password: t.users.certifier.password });
		expect(refused.status).toBe(409);
		const body = (await refused.json()).error;
		expect(body.blockers).toEqual([
			{
				id: r.id,
				identifier: r.identifier,
				title: r.title,
				reasons: [`Finding F-${f.number} is open against it.`]
			}
		]);
		expect(await testDb()('baselines').where({ project_id: t.project.id })).toEqual([]);
		expect(await testDb()('signatures').where({ project_id: t.project.id })).toEqual([]);

		const defer = await c.json(`/api/v1/findings/${f.id}`, 'PATCH', {
			version: f.version,
			state: 'deferred',
			justification: 'Next model release.',
			targetDate: '2027-06-30',
			password: t.users.certifier.password
		});
		expect(defer.status).toBe(200);
		const ok = await post({ label: 'PDR', password: t.users.certifier.password });
		expect(ok.status).toBe(201);
		const b = await ok.json();
		const stored = await testDb()('baselines').where({ id: b.id }).first();
		expect(stored.manifest.deferredFindings).toEqual([
			expect.objectContaining({
				label: `F-${f.number}`,
				targetDate: '2027-06-30',
				justification: 'Next model release.'
			})
		]);
		const sig = await testDb()('signatures').where({ target_type: 'baseline', target_id: b.id }).first();
		expect(sig).toMatchObject({ act: 'baseline.release', signer_email: t.users.certifier.email });
		expect(sig.content.manifestSha256).toBe(stored.manifest_hash);
		const html = await (await c.get(`/p/${t.project.key}/baselines/${b.id}`, { accept: 'text/html' })).text();
		expect(html).toContain(stored.manifest_hash);
		expect(html).toContain('deferred to 2027-06-30');
	});
});

describe('the audit chain', () => {
	it('is intact after all of it, and holds every signature', async () => {
		const chain = await verifyChain(testDb());
		expect(chain.ok).toBe(true);
		const sigs = Number((await testDb()('signatures').count('* as n').first())?.n);
		const audited = Number(
			(
				await testDb()('audit_events')
					.where('action', 'like', 'signature.%')
					// Refusals and the provider re-authentications that precede some signatures are not signatures.
					.whereNotIn('action', ['signature.refused', 'signature.reauthenticated'])
					.count('* as n')
					.first()
			)?.n
		);
		expect(audited).toBe(sigs);
		expect(sigs).toBeGreaterThan(8);
	});
});
