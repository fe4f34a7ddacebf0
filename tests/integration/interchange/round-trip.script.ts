// Run by round-trip.test.ts with tsx against a scratch database that holds the seeded demo (VX7):
// export VX7 as ReqIF, make an empty project of the same name with the same models (same content,
// so the same hashes), import the file there, export again, and import the same file a second time;
// then import VX7's file back into VX7 itself. Prints one JSON line with the files, the previews and
// what the database holds for both projects.
import { closeDb, db } from '../../../src/lib/server/db';
import { exportProject, previewImport, confirmImport } from '../../../src/lib/server/interchange/service';
import { createModel, publishVersion } from '../../../src/lib/server/models/service';

const text = async (p: { id: number; key: string; name: string }) =>
	[...(await exportProject({ ...p, description: '' } as never)).chunks].join('');

const vx7 = await db()('projects').where({ key: 'VX7' }).first('id', 'key', 'name');
const member = (role: string) =>
	db()('memberships as m')
		.join('users as u', 'u.id', 'm.user_id')
		.where({ 'm.project_id': vx7.id, 'm.role': role })
		.first('u.id', 'u.email');
const engineer = await member('engineer');
const analyst = await member('analyst');
const eng = { userId: Number(engineer.id), label: engineer.email };
const ana = { userId: Number(analyst.id), label: analyst.email };
const source = { id: Number(vx7.id), key: vx7.key, name: vx7.name };

const first = await text(source);

const [rt] = await db()('projects')
	.insert({ key: 'RT7', name: vx7.name, description: 'round trip' })
	.returning('id');
const target = { id: Number(rt.id), key: 'RT7', name: vx7.name };
await db()('memberships').insert([
	{ user_id: engineer.id, project_id: target.id, role: 'engineer' },
	{ user_id: analyst.id, project_id: target.id, role: 'analyst' }
]);
for (const m of await db()('models').where({ project_id: source.id }).orderBy('id')) {
	const made = await createModel(ana, target.id, { name: m.name, description: m.description });
	for (const v of await db()('model_versions').where({ model_id: m.id }).orderBy('version')) {
		await publishVersion(ana, target.id, Number(made.id), {
			note: v.note,
			operatingPoints: v.content.operatingPoints
		});
	}
}

const file = { name: 'VX7-requirements.reqif', bytes: Buffer.from(first, 'utf8') };
const preview = await previewImport(eng, target, 'reqif', file, null);
const confirmed = await confirmImport(eng, target, preview.id);
const second = await text(target);
const again = await previewImport(eng, target, 'reqif', file, null);
const againResult = await confirmImport(eng, target, again.id);
const third = await text(target);
const sourceRevisionsBefore = await revisionCount(source.id);
const self = await previewImport(eng, source, 'reqif', file, null);
const selfResult = await confirmImport(eng, source, self.id);
const sourceRevisionsAfter = await revisionCount(source.id);

/** Every stored revision of a project (a no-op import adds none). */
async function revisionCount(projectId: number) {
	const n = await db()('requirement_revisions as v')
		.join('requirements as r', 'r.id', 'v.requirement_id')
		.where('r.project_id', projectId)
		.count('* as n')
		.first();
	return Number(n?.n ?? 0);
}

/** What both projects must hold alike. */
async function content(projectId: number) {
	const reqs = await db()('requirements as r')
		.join('requirement_revisions as v', function () {
			this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
		})
		.where('r.project_id', projectId)
		.orderBy('r.identifier')
		.select(
			'r.identifier',
			'v.title',
			'v.statement',
			'v.rationale',
			'v.level',
			'v.assurance_level',
			'v.methods',
			'r.review_state',
			'r.approved_revision'
		);
	const links = await db()('requirement_links as l')
		.join('requirements as c', 'c.id', 'l.child_id')
		.join('requirements as p', 'p.id', 'l.parent_id')
		.where('c.project_id', projectId)
		.whereNull('l.removed_at')
		.orderBy(['c.identifier', 'p.identifier'])
		.select('c.identifier as child', 'p.identifier as parent');
	const specs = await db()('requirements as r')
		.join('stability_specs as s', 's.id', 'r.current_spec_id')
		.join('models as m', 'm.id', 's.model_id')
		.leftJoin('model_versions as mv', 'mv.id', 's.model_version_id')
		.where('r.project_id', projectId)
		.orderBy('r.identifier')
		.select(
			'r.identifier',
			's.check',
			's.required_margin',
			's.operating_points',
			'm.name as model',
			'mv.version as pinned'
		);
	return { reqs, links, specs };
}

const revisions = await db()('requirements')
	.where({ project_id: target.id })
	.sum('current_revision as n')
	.first();
const queued = await db()('analysis_runs').where({ project_id: target.id }).count('* as n').first();
const events = await db()('audit_events')
	.where({ project_id: target.id, action: 'import.confirm' })
	.count('* as n')
	.first();
console.log(
	JSON.stringify({
		first,
		second,
		third,
		preview: { counts: preview.counts, problems: preview.problems },
		confirmed,
		again: { counts: again.counts, problems: again.problems },
		againResult,
		self: { counts: self.counts, problems: self.problems },
		selfResult,
		sourceRevisionsBefore,
		sourceRevisionsAfter,
		statusNotes: preview.items.filter((i) => i.statusNote).map((i) => [i.identifier, i.fileStatus, i.willBe]),
		source: await content(source.id),
		target: await content(target.id),
		targetRevisionSum: Number(revisions?.n ?? 0),
		targetRuns: Number(queued?.n ?? 0),
		importEvents: Number(events?.n ?? 0)
	})
);
await closeDb();
