// Run by demo-states.test.ts with tsx against a scratch database that holds the seeded demo (VX7): it
// settles the demo's queued runs, writes the three situations of issue 12 through the app's services,
// and prints, as one JSON line, what each in-process surface says about every requirement.
import ExcelJS from 'exceljs';
import { PassThrough } from 'node:stream';
import { blockersOf } from '../../../src/lib/server/baselines/service';
import { coverageOf } from '../../../src/lib/server/coverage/service';
import { closeDb, db } from '../../../src/lib/server/db';
import { processRun } from '../../../src/lib/server/analyses/run';
import { createModel, publishVersion } from '../../../src/lib/server/models/service';
import { addLink, createRequirement, setSpecification } from '../../../src/lib/server/requirements/service';
import { sourceOf, stateWords, writeWorkbook } from '../../../src/lib/server/trace/export';
import { matrixAll, snapshot } from '../../../src/lib/server/trace/service';
import { verificationOf } from '../../../src/lib/server/verification/service';

const settle = async () => {
	for (const id of await db()('analysis_runs').where({ status: 'queued' }).orderBy('id').pluck('id'))
		await processRun(Number(id), 'demo-states test');
};

const project = await db()('projects').first('id', 'key');
const engineer = await db()('memberships as m')
	.join('users as u', 'u.id', 'm.user_id')
	.where({ 'm.project_id': project.id, 'm.role': 'engineer' })
	.first('u.id', 'u.email');
const analyst = await db()('memberships as m')
	.join('users as u', 'u.id', 'm.user_id')
	.where({ 'm.project_id': project.id, 'm.role': 'analyst' })
	.first('u.id', 'u.email');
const eng = { userId: Number(engineer.id), label: engineer.email };
const ana = { userId: Number(analyst.id), label: analyst.email };
await settle();

const elevon = await db()('models')
	.where({ project_id: project.id })
	.where('name', 'like', 'Elevon%')
	.first('id');
const base = {
	rationale: 'Issue 12 situation.',
	assuranceLevel: 'B',
	ownerId: eng.userId,
	status: 'approved',
	changeNote: 'test'
};

// 1. The statement says one sector, the specification checks another.
const disagree = await createRequirement(eng, project, {
	...base,
	title: 'Elevon loop, statement and specification apart',
	statement:
		'The elevon position loop shall remain absolutely stable for every torque gain in the sector [0.4, 1.8].',
	level: 'loop',
	methods: ['analysis']
} as never);
await setSpecification(eng, Number(disagree.id), {
	check: { type: 'circle', sector: [0.5, 1.8] },
	requiredMargin: null,
	operatingPoints: null,
	modelId: Number(elevon.id),
	modelVersionId: null,
	template: null
} as never);

// 2. An integrator plant, G(s) = 1/(s (s + 1)), under the sector case k1 = 0.
const integ = await createModel(ana, project.id, {
	name: 'Trim integrator',
	description: 'Integrating trim actuator (a pole at the origin).'
});
await publishVersion(ana, project.id, integ.id, {
	note: 'Integrator with a first-order lag.',
	operatingPoints: [{ label: 'nominal', model: { kind: 'tf', num: [1], den: [1, 1, 0] } }]
});
const integrator = await createRequirement(eng, project, {
	...base,
	title: 'Trim loop with a saturating actuator',
	statement: 'The trim loop shall remain absolutely stable for every actuator gain in the sector [0, 2].',
	level: 'loop',
	methods: ['analysis']
} as never);
await setSpecification(eng, Number(integrator.id), {
	check: { type: 'circle', sector: [0, 2] },
	requiredMargin: null,
	operatingPoints: null,
	modelId: integ.id,
	modelVersionId: null,
	template: null
} as never);

// 3. A system requirement and a subsystem requirement verified only through a loop requirement.
const lag = await createModel(ana, project.id, {
	name: 'Cabin fan speed loop',
	description: 'First-order lag.'
});
await publishVersion(ana, project.id, lag.id, {
	note: 'Data sheet.',
	operatingPoints: [{ label: 'nominal', model: { kind: 'tf', num: [1], den: [1, 1] } }]
});
const system = await createRequirement(eng, project, {
	...base,
	title: 'Cabin air supply stays stable',
	statement:
		'The cabin air supply shall remain absolutely stable for every fan drive gain inside its declared sector.',
	level: 'system',
	methods: ['analysis', 'test']
} as never);
const subsystem = await createRequirement(eng, project, {
	...base,
	title: 'Cabin fan drive stability',
	statement:
		'The cabin fan drive shall remain absolutely stable for every drive gain inside its declared sector.',
	level: 'subsystem',
	methods: ['analysis']
} as never);
const leaf = await createRequirement(eng, project, {
	...base,
	title: 'Cabin fan loop circle criterion',
	statement:
		'The cabin fan speed loop shall remain absolutely stable for every drive gain in the sector [0.5, 2].',
	level: 'loop',
	methods: ['analysis']
} as never);
await addLink(eng, Number(subsystem.id), Number(system.id));
await addLink(eng, Number(leaf.id), Number(subsystem.id));
await setSpecification(eng, Number(leaf.id), {
	check: { type: 'circle', sector: [0.5, 2] },
	requiredMargin: null,
	operatingPoints: null,
	modelId: lag.id,
	modelVersionId: null,
	template: null
} as never);
await settle();

const states = await verificationOf(db(), { projectId: project.id });
const matrix = await matrixAll(project.id, {
	sort: 'identifier',
	dir: 'asc',
	limit: 100,
	offset: 0
} as never);
const snap = await snapshot(project.id);
const out = new PassThrough();
const chunks: Buffer[] = [];
out.on('data', (c: Buffer) => chunks.push(c));
await writeWorkbook(sourceOf(snap), { exportedAt: new Date(), exportedBy: 'test', baseline: null }, out);
const wb = new ExcelJS.Workbook();
await wb.xlsx.load(Buffer.concat(chunks) as never);
const sheet = wb.getWorksheet('Trace matrix')!;
const header = (sheet.getRow(1).values as ExcelJS.CellValue[]).map((v) => String(v ?? ''));
const xlsx: Record<string, string> = {};
sheet.eachRow((row, n) => {
	if (n > 1) {
		const v = row.values as ExcelJS.CellValue[];
		xlsx[String(v[header.indexOf('Identifier')])] = String(v[header.indexOf('State')]);
	}
});
const cover = (wb.getWorksheet('Cover')!.getColumn(2).values as ExcelJS.CellValue[]).map((v) =>
	String(v ?? '')
);

const links = await db()('requirement_links').whereNull('removed_at').select('child_id', 'parent_id');
const levels = Object.fromEntries(matrix.map((r) => [r.id, r.level]));
console.log(
	JSON.stringify({
		ids: {
			disagree: Number(disagree.id),
			integrator: Number(integrator.id),
			system: Number(system.id),
			subsystem: Number(subsystem.id),
			leaf: Number(leaf.id)
		},
		levels,
		links,
		service: Object.fromEntries(
			[...states].map(([id, v]) => [id, { state: v.state, how: v.how, label: v.label, blockers: v.blockers }])
		),
		matrix: Object.fromEntries(
			matrix.map((r) => [
				r.id,
				{
					state: r.state,
					words: stateWords(r),
					identifier: r.identifier,
					blockers: r.blockers,
					methods: r.methods,
					title: r.title,
					acceptedEvidence: r.evidence.accepted
				}
			])
		),
		manifest: Object.fromEntries(snap.requirements.map((r) => [r.id, r.state])),
		xlsx,
		cover,
		coverage: coverageOf(matrix),
		freezeBlockers: blockersOf(snap).map((b) => b.id)
	})
);
await closeDb();
