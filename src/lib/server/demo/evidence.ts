import type { Knex } from 'knex';
import { modelSchema } from '../../stability/index';
import type { Actor } from '../audit';
import { modelResponse } from '../evidence/comparison';
import { reviewEvidence, uploadEvidence } from '../evidence/service';
import { confirmSigner } from '../identity/reauth';
import { DEMO_PASSWORD, DEMO_PROJECT } from './accounts';

// Demo mode only: test evidence for the invented VX7 scenario, uploaded and reviewed through the same
// services as the app. A wing-tilt rig sweep (generated from the ground-vibration-test model with small,
// fixed deviations, as a rig would measure it) and an elevon rig report (a one-page PDF), which the
// certifier accepts. Needs the object store; without it the demo simply has no evidence.

function pdfDocument(lines: string[]): Buffer {
	// A minimal PDF 1.4 (ISO 32000-1, 7.5): catalog, page tree, one page, Helvetica, one content stream.
	const esc = (s: string) => s.replace(/[\\()]/g, (c) => '\\' + c);
	const text = lines
		.map((l, i) => `BT /F1 ${i === 0 ? 16 : 11} Tf 56 ${770 - i * 22} Td (${esc(l)}) Tj ET`)
		.join('\n');
	const objects = [
		'<< /Type /Catalog /Pages 2 0 R >>',
		'<< /Type /Pages /Kids [3 0 R] /Count 1 >>',
		'<< /Type /Page /Parent 2 0 R /MediaBox [0 0 595 842] /Resources << /Font << /F1 4 0 R >> >> /Contents 5 0 R >>',
		'<< /Type /Font /Subtype /Type1 /BaseFont /Helvetica >>',
		`<< /Length ${Buffer.byteLength(text)} >>\nstream\n${text}\nendstream`
	];
	let out = '%PDF-1.4\n';
	const offsets: number[] = [];
	objects.forEach((o, i) => {
		offsets.push(Buffer.byteLength(out));
		out += `${i + 1} 0 obj\n${o}\nendobj\n`;
	});
	const xref = Buffer.byteLength(out);
	out += `xref\n0 ${objects.length + 1}\n0000000000 65535 f \n`;
	for (const o of offsets) out += `${String(o).padStart(10, '0')} 00000 n \n`;
	out += `trailer\n<< /Size ${objects.length + 1} /Root 1 0 R >>\nstartxref\n${xref}\n%%EOF\n`;
	return Buffer.from(out, 'latin1');
}

async function upload(
	project: { id: number; key: string },
	actor: Actor,
	fields: Record<string, string>,
	file: { name: string; bytes: Buffer; type: string }
) {
	const form = new FormData();
	for (const [k, v] of Object.entries(fields)) form.set(k, v);
	form.set('file', new Blob([new Uint8Array(file.bytes)], { type: file.type }), file.name);
	const body = new Response(form);
	return uploadEvidence({ project, actor, headers: body.headers, body: body.body });
}

/** Seed the demo evidence once; returns how many items were added (0 when present already or impossible). */
export async function seedDemoEvidence(knex: Knex): Promise<number> {
	const project = await knex('projects').where({ key: DEMO_PROJECT.key }).first();
	if (!project) return 0;
	if (await knex('evidence').where({ project_id: project.id }).first()) return 0;
	const person = async (email: string): Promise<Actor> => {
		const u = await knex('users').where({ email }).first();
		return { userId: Number(u.id), label: u.email };
	};
	const engineer = await person('engineer@demo.loopwarden.test');
	const certifier = await person('certifier@demo.loopwarden.test');
	const byTitle = async (title: string) =>
		knex('requirements as r')
			.join('requirement_revisions as rr', function () {
				this.on('rr.requirement_id', 'r.id').andOn('rr.revision', 'r.current_revision');
			})
			.where({ 'r.project_id': project.id, 'rr.title': title })
			.first('r.id', 'r.identifier');
	const tiltReq = await byTitle('Wing-tilt loop circle criterion');
	const elevonReq = await byTitle('Elevon loop circle criterion');
	const ref = { id: Number(project.id), key: project.key as string };
	let added = 0;

	const tiltModel = await knex('models as m')
		.join('model_versions as mv', function () {
			this.on('mv.model_id', 'm.id').andOn('mv.version', 'm.latest_version');
		})
		.where({ 'm.project_id': project.id, 'm.name': 'Wing-tilt actuator' })
		.first('mv.content');
	const op = (tiltModel?.content as { operatingPoints?: { model: unknown }[] } | undefined)
		?.operatingPoints?.[0];
	const model = op ? modelSchema.safeParse(op.model) : null;
	if (tiltReq && model?.success) {
		const G = modelResponse(model.data);
		let csv =
			'# Wing-tilt rig 3, actuator S/N 0042, swept sine, 20 C\nfrequency (Hz),magnitude (dB),phase (deg)\n';
		for (let i = 0; i < 90; i++) {
			const w = 0.1 * 10 ** ((2.6 * i) / 89);
			const g = G(w);
			// Fixed deviations of a few per cent and degrees, as a rig measurement differs from the model.
			const dev = 1 + 0.03 * Math.sin(1.7 * i);
			const mag = 20 * Math.log10(Math.hypot(g.re, g.im) * dev);
			const phase = (Math.atan2(g.im, g.re) * 180) / Math.PI + 1.5 * Math.cos(1.3 * i);
			csv += `${(w / (2 * Math.PI)).toPrecision(6)},${mag.toFixed(3)},${phase.toFixed(2)}\n`;
		}
		await upload(
			ref,
			engineer,
			{
				title: 'Wing-tilt rig sweep, transition configuration',
				kind: 'frequency-response',
				method: 'test',
				testArticle: 'Wing-tilt actuator S/N 0042 on rig 3, 20 C',
				testDate: '2026-11-18',
				requirementIds: tiltReq.identifier
			},
			{ name: 'tilt-rig3-sweep.csv', bytes: Buffer.from(csv), type: 'text/csv' }
		);
		added++;
	}
	if (elevonReq) {
		const pdf = pdfDocument([
			'Elevon actuator rig report ER-12',
			'Test article: elevon actuator S/N 0107, rig 1, 20 C.',
			'Torque-gain sweep 0.4 to 1.8 of nominal; no limit cycle observed at any setting.',
			'Invented demo document for the VX7 scenario.'
		]);
		const r = await upload(
			ref,
			engineer,
			{
				title: 'Elevon rig report ER-12',
				kind: 'test-report',
				method: 'test',
				testArticle: 'Elevon actuator S/N 0107 on rig 1',
				testDate: '2026-11-02',
				requirementIds: elevonReq.identifier
			},
			{ name: 'ER-12 elevon rig report.pdf', bytes: pdf, type: 'application/pdf' }
		);
		await reviewEvidence({
			evidenceId: r.id,
			project: ref,
			actor: certifier,
			role: 'certifier',
			fields: {
				decision: 'accepted',
				comment: 'Configuration matches the sector of the requirement.',
				revision: 1
			},
			// The certifier signs as in the app: the password re-entered at signing.
			signer: {
				id: certifier.userId!,
				email: certifier.label,
				name: 'Chidi Laurent',
				confirmation: await confirmSigner(
					null,
					{ id: certifier.userId!, email: certifier.label },
					{
						password: DEMO_PASSWORD
					}
				)
			}
		});
		added++;
	}
	return added;
}
