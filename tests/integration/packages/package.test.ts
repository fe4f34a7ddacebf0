import { GetObjectCommand } from '@aws-sdk/client-s3';
import { execFileSync, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAUSE_LABELS, FINDING_LOOK, VERDICT_LOOK } from '../../../src/lib/verification/index';
import {
	closeTestDb,
	createModel,
	createModelVersion,
	createComputedRun,
	createRequirement,
	createSpec,
	createTeam,
	testDb
} from '../../factories';
import { Client, signedIn } from '../../helpers/http';
import { evidenceForm, postForm, testS3 } from '../evidence/fixtures';

// Issue 16's "done when", against the running app, its worker and the object-storage stand-in: a
// certifier freezes a baseline of requirements whose runs the engine computed (computeRun, as the
// worker does), asks for its data package, waits for it, and the files are checked with tools from
// outside the project: Debian's poppler-utils (pdftotext, pdftoppm, pdfinfo), unzip and GNU sha256sum.
// Expected values are read from the database, never from the package.

let team: Awaited<ReturnType<typeof createTeam>>;
let certifier: Client;
let viewer: Client;
let engineer: Client;
let baselineId: number;
let dir: string;
const reqs: { id: number; identifier: string; title: string }[] = [];
let evidenceBytes: Buffer;
/** Findings raised by hand: deferred and closed before the freeze, one opened after it. */
const findingIds: { deferred: number; closed: number; later: number } = { deferred: 0, closed: 0, later: 0 };

const sh = (cmd: string, args: string[], cwd?: string) =>
	execFileSync(cmd, args, { cwd, encoding: 'utf8', maxBuffer: 256 * 1024 * 1024 });
const sha = (b: Buffer | string) => createHash('sha256').update(b).digest('hex');

// Model content with its keys in sorted order, so the factory's JSON hash is the canonical one.
// 1/(s+1)^3: min Re G(jw) = -1/4 at w = 1 rad/s, so the circle criterion with k1 = 0 proves every
// k2 < 4 (Khalil, Nonlinear Systems, 3rd ed., Theorem 7.1); [0, 3] passes, [0, 6] is not proved.
const CONTENT = {
	operatingPoints: [{ label: 'nominal', model: { den: [1, 3, 3, 1], kind: 'tf', num: [1] } }]
};
const CHECKS = [
	{ type: 'circle', sector: [0, 3] },
	{ type: 'circle', sector: [0, 6] },
	{ type: 'popov', sector: [0, 3] }
];

async function waitDone(client: Client, href: string, ms = 240_000) {
	const end = Date.now() + ms;
	const seen: number[] = [];
	for (;;) {
		const res = await client.get(href, { accept: 'application/json' });
		expect(res.status).toBe(200);
		const p = (await res.json()) as {
			status: string;
			progress: number;
			error: string | null;
			report: { href: string; sha256: string; pages: number } | null;
			archive: { href: string; sha256: string } | null;
		};
		seen.push(p.progress);
		if (p.status === 'done' || p.status === 'error') return { p, seen };
		if (Date.now() > end) throw new Error(`package not done in ${ms} ms: ${JSON.stringify(p)}`);
		await new Promise((r) => setTimeout(r, 500));
	}
}

async function download(client: Client, href: string): Promise<Buffer> {
	const res = await client.get(href);
	expect(res.status).toBe(200);
	return Buffer.from(await res.arrayBuffer());
}

/** Raise a finding by hand (the engineer, through the findings page's form); its id. */
async function raise(requirementId: number, title: string): Promise<number> {
	const r = await engineer.action(`/p/${team.project.key}/findings?/raise`, {
		requirementId: String(requirementId),
		title
	});
	expect(r.type, JSON.stringify(r)).toBe('redirect');
	const f = await testDb()('findings').where({ requirement_id: requirementId, title }).first('id');
	return Number(f.id);
}

beforeAll(async () => {
	team = await createTeam();
	certifier = await signedIn(team.users.certifier.email, team.users.certifier.password);
	viewer = await signedIn(team.users.viewer.email, team.users.viewer.password);
	engineer = await signedIn(team.users.engineer.email, team.users.engineer.password);
	const pid = team.project.id;
	const model = await createModel(pid, { name: 'Pitch loop' });
	await createModelVersion(model.id, CONTENT);
	for (let i = 0; i < CHECKS.length; i++) {
		const r = await createRequirement(pid, {
			// The first title starts with "=": the CSV must write it as text (formula guard).
			title: i === 0 ? '=HYPERLINK("x") pitch loop stability' : `Pitch loop stability ${i}`,
			statement: `The pitch loop shall remain absolutely stable for every gain in the sector [0, ${CHECKS[i].sector[1]}].`,
			methods: ['analysis'],
			// The first goes through the review workflow (a signed approval); the others are loaded approved.
			status: i === 0 ? 'draft' : 'approved'
		});
		reqs.push(r);
		await createSpec(r.id, { modelId: model.id, check: CHECKS[i] });
		await createComputedRun(r.id, CHECKS[i], CONTENT);
	}
	// One evidence file through the API, accepted by the certifier.
	evidenceBytes = Buffer.from(`rig log\n${'0123456789abcdef'.repeat(400)}\n`);
	const up = await postForm(
		engineer,
		`/api/v1/projects/${team.project.key}/evidence`,
		evidenceForm(
			{ title: 'Pitch rig log', kind: 'log', requirementIds: reqs[0].identifier },
			{ name: 'pitch rig.log', bytes: evidenceBytes, type: 'text/plain' }
		)
	);
	expect(up.status, await up.clone().text()).toBe(201);
	const ev = (await up.json()) as { id: number };
	const rv = await certifier.request(`/api/v1/evidence/${ev.id}/review`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', accept: 'application/json' },
		body: JSON.stringify({
			decision: 'accepted',
			comment: 'matches the rig record',
			revision: 1,
			password: team.users.certifier.password
		})
	});
	expect(rv.status, await rv.clone().text()).toBe(201);
	// Sign-off before the freeze: the first requirement's revision approved by the certifier's signature;
	// a finding deferred and one closed, each by signature.
	const fd = new URLSearchParams({ revision: '1', reviewers: String(team.users.certifier.id) });
	const asked = await engineer.request(`/p/${team.project.key}/requirements/${reqs[0].id}?/requestReview`, {
		method: 'POST',
		headers: {
			'content-type': 'application/x-www-form-urlencoded',
			accept: 'application/json',
			'x-sveltekit-action': 'true'
		},
		body: fd
	});
	expect(((await asked.json()) as { type: string }).type).toBe('success');
	const approved = await certifier.action(`/p/${team.project.key}/requirements/${reqs[0].id}?/decide`, {
		revision: '1',
		decision: 'approve',
		comment: 'Statement and sector agree.',
		password: team.users.certifier.password
	});
	expect(approved.type, JSON.stringify(approved.data)).toBe('success');
	findingIds.deferred = await raise(reqs[1].id, 'Sector [0, 6] not proved on the pitch loop');
	findingIds.closed = await raise(reqs[2].id, 'Popov plot scale questioned');
	const signedMove = async (id: number, body: Record<string, string>) => {
		const res = await certifier.json(`/api/v1/findings/${id}`, 'PATCH', {
			version: 1,
			password: team.users.certifier.password,
			...body
		});
		expect(res.status, await res.clone().text()).toBe(200);
	};
	await signedMove(findingIds.deferred, {
		state: 'deferred',
		justification: 'The actuator change of the next model release narrows the sector.',
		targetDate: '2027-03-31'
	});
	await signedMove(findingIds.closed, {
		state: 'closed',
		comment: 'Scale checked against the stored curve.'
	});
	const fr = await certifier.request(`/api/v1/projects/${team.project.key}/baselines`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', accept: 'application/json' },
		body: JSON.stringify({
			label: 'Package test baseline',
			note: '',
			password: team.users.certifier.password
		})
	});
	expect(fr.status, await fr.clone().text()).toBe(201);
	baselineId = Number(((await fr.json()) as { id: number }).id);
	// After the freeze: a finding the baseline does not know of (read at package time, marked so).
	findingIds.later = await raise(reqs[1].id, 'Rig wiring to be checked');
	dir = mkdtempSync(join(process.env.TMPDIR ?? tmpdir(), 'package-test-'));
}, 120_000);
afterAll(async () => {
	if (dir) rmSync(dir, { recursive: true, force: true });
	await closeTestDb();
});

describe('the data package of a baseline', () => {
	let pkg: Awaited<ReturnType<typeof waitDone>>['p'];
	let pdf: Buffer;
	let zip: Buffer;

	it('only certifiers (and admins) generate; an unknown field is refused by name', async () => {
		const url = `/api/v1/projects/${team.project.key}/baselines/${baselineId}/package`;
		const json = { 'content-type': 'application/json', accept: 'application/json' };
		const v = await viewer.request(url, { method: 'POST', headers: json, body: '{}' });
		expect(v.status).toBe(403);
		const bad = await certifier.request(url, { method: 'POST', headers: json, body: '{"format":"pdf"}' });
		expect(bad.status).toBe(400);
		expect(((await bad.json()) as { error: { fields: Record<string, string> } }).error.fields).toEqual({
			format: 'unknown field "format"'
		});
		// The page's button posts no field either; a field is refused by name and nothing is queued.
		const form = await certifier.action(`/p/${team.project.key}/baselines/${baselineId}?/package`, {
			format: 'pdf'
		});
		expect(form.type).toBe('failure');
		expect(form.status).toBe(400);
		expect(form.data).toMatchObject({ action: 'package', errors: { format: 'unknown field "format"' } });
		expect(
			await testDb()('data_packages').where({ baseline_id: baselineId }).count('* as n').first()
		).toEqual({
			n: '0'
		});
	});

	it('is queued (202 with Location), shows progress, and ends done with download links', async () => {
		// Two requests at once (a double click, two certifiers): one build, both told where it is.
		const ask = () =>
			certifier.request(`/api/v1/projects/${team.project.key}/baselines/${baselineId}/package`, {
				method: 'POST',
				headers: { accept: 'application/json' }
			});
		const [res, twice] = await Promise.all([ask(), ask()]);
		expect([res.status, twice.status]).toEqual([202, 202]);
		const location = res.headers.get('location')!;
		expect(location).toMatch(new RegExp(`^/api/v1/projects/${team.project.key}/packages/\\d+$`));
		expect(twice.headers.get('location')).toBe(location);
		const requested = await testDb()('audit_events')
			.where({ project_id: team.project.id, action: 'package.request' })
			.count('* as n')
			.first();
		expect(requested).toEqual({ n: '1' });
		const done = await waitDone(viewer, location);
		pkg = done.p;
		expect(pkg.error).toBeNull();
		expect(pkg.status).toBe('done');
		expect(done.seen.at(-1)).toBe(100);
		// Viewers download (certifiers and viewers may).
		pdf = await download(viewer, pkg.report!.href);
		zip = await download(viewer, pkg.archive!.href);
		expect(sha(pdf)).toBe(pkg.report!.sha256);
		expect(sha(zip)).toBe(pkg.archive!.sha256);
		// Stored with its SHA-256, and audited.
		const row = await testDb()('data_packages').where({ baseline_id: baselineId, status: 'done' }).first();
		expect(row.report_sha256).toBe(sha(pdf));
		const ev = await testDb()('audit_events')
			.where({ project_id: team.project.id, action: 'package.generate' })
			.orderBy('seq', 'desc')
			.first();
		expect(ev.after).toMatchObject({ report: { sha256: sha(pdf) }, archive: { sha256: sha(zip) } });
	}, 300_000);

	it('the report names every requirement, verdict and SHA-256 of the baseline as the database has them', async () => {
		writeFileSync(join(dir, 'report.pdf'), pdf);
		const text = sh('pdftotext', ['-layout', join(dir, 'report.pdf'), '-']);
		const flat = text.replace(/\s+/g, ' ');
		const b = await testDb()('baselines').where({ id: baselineId }).first();
		expect(flat).toContain(b.manifest_hash);
		const m = b.manifest as {
			requirements: {
				identifier: string;
				title: string;
				contentHash: string;
				model: { hash: string };
				latestRun: { verdict: string; outputHash: string };
			}[];
			evidence: { sha256: string }[];
		};
		expect(m.requirements.map((r) => r.identifier).sort()).toEqual(reqs.map((r) => r.identifier).sort());
		for (const r of m.requirements) {
			expect(flat).toContain(r.identifier);
			expect(flat).toContain(r.contentHash);
			expect(flat).toContain(r.model.hash);
			expect(flat).toContain(r.latestRun.outputHash);
			const run = await testDb()('analysis_runs').where({ output_hash: r.latestRun.outputHash }).first();
			const words = VERDICT_LOOK[run.verdict].label;
			// The verdict as the database has it, in the requirement's own section (from its heading to
			// its sign-off block; the contents name the heading first).
			const start = flat.lastIndexOf(`${r.identifier} ${r.title}`);
			const section = flat.slice(start, flat.indexOf('Approvals and signatures', start));
			expect(section).toContain(`Verdict ${words}`);
		}
		for (const e of m.evidence) expect(flat).toContain(e.sha256);
		expect(flat).toContain('support, and never replace, engineering judgement');
	});

	it('the report carries the sign-off records with their names and values as the database has them', async () => {
		const text = sh('pdftotext', ['-layout', join(dir, 'report.pdf'), '-']);
		const flat = text.replace(/\s+/g, ' ');
		const b = await testDb()('baselines').where({ id: baselineId }).first();
		const sigs = await testDb()('signatures').where({ project_id: team.project.id }).orderBy('id');
		// Approval, evidence acceptance, the deferral, the closure, the release: all made before the package.
		expect(sigs.map((x) => x.act).sort()).toEqual(
			['baseline.release', 'evidence.accept', 'finding.close', 'finding.defer', 'requirement.approve'].sort()
		);
		for (const x of sigs) {
			expect(flat).toContain(`Signature #${x.id}`);
			expect(flat).toContain(x.content_sha256);
			expect(flat).toContain(`${x.signer_name} (${x.signer_email}) as ${x.signer_role}`);
			expect(flat).toContain(x.meaning);
			expect(flat).toContain(`Confirmed by ${x.confirmed_by}`);
			expect(flat).toContain(new Date(x.signed_at).toISOString().replace('T', ' ').slice(0, 19) + ' UTC');
		}
		// Section names (the contents test checks each heading on its page), where each part comes from.
		expect(flat).toContain('Approvals and signatures');
		expect(flat).toContain('Where the sign-off records come from');
		expect(flat).toContain('as frozen in the baseline manifest');
		expect(flat).toContain('read from the database when this package was built');

		// The requirement's own block: its review as frozen, its approval signature and what it signed.
		const approval = sigs.find((x) => x.act === 'requirement.approve')!;
		expect(Number(approval.target_id)).toBe(reqs[0].id);
		const review = (
			b.manifest.review as {
				requirement: string;
				revision: number;
				state: string;
				approvedRevision: number | null;
			}[]
		).find((r) => r.requirement === reqs[0].identifier)!;
		// From the requirement's own heading (the contents name it first).
		const own = flat.slice(flat.lastIndexOf(`${reqs[0].identifier} ${reqs[0].title}`));
		expect(own).toContain(
			`Review revision ${review.revision} ${review.state}; revision in force: ${review.approvedRevision}`
		);
		expect(review).toMatchObject({ state: 'approved', approvedRevision: 1 });
		expect(own).toContain(
			`What was signed requirement ${reqs[0].identifier} revision ${approval.target_revision}`
		);
		expect(own.indexOf(approval.content_sha256)).toBeGreaterThan(0);

		// The signed closure of a finding, in the section of the finding's requirement.
		const closure = sigs.find((x) => x.act === 'finding.close')!;
		expect(Number(closure.target_id)).toBe(findingIds.closed);
		const third = flat.slice(flat.lastIndexOf(`${reqs[2].identifier} ${reqs[2].title}`));
		expect(third).toContain(`Signature #${closure.id} closed by`);
		expect(third).toContain(closure.content_sha256);

		// Release: the release signature signs the manifest SHA-256 on the cover.
		const rel = sigs.find((x) => x.act === 'baseline.release')!;
		expect(rel.content.manifestSha256).toBe(b.manifest_hash);
		expect(flat).toContain(`Signs this manifest yes: the signed manifest SHA-256 is ${b.manifest_hash}`);

		// Findings: each with its state's words; the deferred ones the baseline carries with their reasons.
		const rows = await testDb()('findings').where({ project_id: team.project.id }).orderBy('number');
		expect(rows).toHaveLength(3);
		const section = flat.slice(flat.indexOf('Findings Findings against the requirements'));
		for (const f of rows) {
			expect(section).toMatch(
				new RegExp(
					`F-${f.number} \\S+ ${f.assurance_level} ${FINDING_LOOK[f.state as 'open'].label} ${CAUSE_LABELS[f.cause as 'manual']}`
				)
			);
		}
		const counts = (state: string) => rows.filter((f) => f.state === state).length;
		for (const st of ['open', 'closed', 'deferred'] as const)
			expect(section).toContain(`${FINDING_LOOK[st].label} ${counts(st)}`);
		const deferred = b.manifest.deferredFindings as {
			label: string;
			justification: string;
			targetDate: string;
		}[];
		expect(deferred).toHaveLength(1);
		for (const d of deferred) {
			expect(section).toContain(`Justification ${d.justification}`);
			expect(section).toContain(`Target date ${d.targetDate}`);
		}
		const later = rows.find((f) => Number(f.id) === findingIds.later)!;
		expect(later.state).toBe('open');
		expect(section).toMatch(new RegExp(`F-${later.number} .*?after the freeze`));
		expect(deferred.map((d) => d.label)).not.toContain(`F-${later.number}`);
	});

	it('every page renders, the page count matches "page N of M" and the contents', async () => {
		const pages = Number(/Pages:\s+(\d+)/.exec(sh('pdfinfo', [join(dir, 'report.pdf')]))![1]);
		expect(pages).toBe(pkg.report!.pages);
		const shots = join(dir, 'pages');
		mkdirSync(shots);
		const r = spawnSync('pdftoppm', ['-r', '12', '-png', join(dir, 'report.pdf'), join(shots, 'p')]);
		expect(r.status, String(r.stderr)).toBe(0);
		expect(readdirSync(shots).filter((f) => f.endsWith('.png'))).toHaveLength(pages);
		const page = (n: number) =>
			sh('pdftotext', ['-layout', '-f', String(n), '-l', String(n), join(dir, 'report.pdf'), '-']);
		for (let n = 1; n <= pages; n++) expect(page(n)).toContain(`Page ${n} of ${pages}`);
		// Each contents line "<title> ..... <page>": that page starts with the title.
		const contents = page(2);
		const lines = [...contents.matchAll(/^\s*(\S.*?\S)\s{2,}(\d+)\s*$/gm)].filter(
			(l) => !l[1].startsWith('Page ')
		);
		// Summary, release, findings, trace matrix, requirements; one per requirement; three appendices.
		expect(lines.length).toBe(5 + reqs.length + 3);
		for (const [, title, n] of lines) {
			expect(Number(n)).toBeLessThanOrEqual(pages);
			expect(page(Number(n)).replace(/\s+/g, ' ')).toContain(title.replace(/\s+/g, ' ').slice(0, 40));
		}
	});

	it('the archive checks with sha256sum -c, holds the evidence as stored, and catches a changed byte', async () => {
		const out = join(dir, 'unzipped');
		mkdirSync(out);
		writeFileSync(join(dir, 'package.zip'), zip);
		sh('unzip', ['-q', join(dir, 'package.zip'), '-d', out]);
		const check = spawnSync('sha256sum', ['-c', 'SHA256SUMS'], { cwd: out, encoding: 'utf8' });
		expect(check.status, check.stdout + check.stderr).toBe(0);
		const listed = check.stdout.trim().split('\n');
		expect(listed.every((l) => l.endsWith(': OK'))).toBe(true);
		const files = listed.map((l) => l.slice(0, -': OK'.length));
		expect(files).toContain('README.txt');
		expect(files).toContain('manifest.json');
		expect(files).toContain('trace-matrix.xlsx');
		expect(files).toContain('trace-matrix.csv');
		expect(files.filter((f) => f.startsWith('runs/') && !f.endsWith('-curves.json'))).toHaveLength(
			reqs.length
		);
		expect(files.find((f) => f.endsWith('.pdf'))).toBeTruthy();
		expect(
			sha(
				readFileSync(
					join(
						out,
						files.find((f) => f.endsWith('.pdf'))!
					)
				)
			)
		).toBe(sha(pdf));

		// The manifest file hashes to the baseline's SHA-256; the model file to the version's; each run
		// file to the run's output hash (all from the database).
		const b = await testDb()('baselines').where({ id: baselineId }).first();
		expect(sha(readFileSync(join(out, 'manifest.json')))).toBe(b.manifest_hash);
		const mv = await testDb()('model_versions as v')
			.join('models as m', 'm.id', 'v.model_id')
			.where('m.project_id', team.project.id)
			.first('v.content_hash');
		const modelFile = files.find((f) => f.startsWith('models/'))!;
		expect(sha(readFileSync(join(out, modelFile)))).toBe(mv.content_hash);
		for (const f of files.filter((x) => /^runs\/.*-run-\d+\.json$/.test(x))) {
			const id = Number(/-run-(\d+)\.json$/.exec(f)![1]);
			const run = await testDb()('analysis_runs').where({ id }).first('output_hash');
			expect(sha(readFileSync(join(out, f))), f).toBe(run.output_hash);
		}

		// Evidence exactly as the object store holds it.
		const evFiles = files.filter((f) => f.startsWith('evidence/'));
		expect(evFiles).toHaveLength(1);
		const stored = await testDb()('evidence_files')
			.where({ sha256: sha(evidenceBytes) })
			.first();
		const obj = await testS3().send(
			new GetObjectCommand({ Bucket: process.env.S3_BUCKET!, Key: stored.storage_key })
		);
		const fromStore = Buffer.from(await obj.Body!.transformToByteArray());
		expect(readFileSync(join(out, evFiles[0])).equals(fromStore)).toBe(true);
		expect(fromStore.equals(evidenceBytes)).toBe(true);

		// CSV: byte-order mark, and the title starting with "=" written as text.
		const csv = readFileSync(join(out, 'trace-matrix.csv'));
		expect([...csv.subarray(0, 3)]).toEqual([0xef, 0xbb, 0xbf]);
		expect(csv.toString('utf8')).toContain(`"'=HYPERLINK(""x"") pitch loop stability"`);
		const readme = readFileSync(join(out, 'README.txt'), 'utf8');
		expect(readme).toContain('sha256sum -c SHA256SUMS');
		expect(readme).toContain('never replace, engineering judgement');
		expect(readme).not.toContain('WARNING');

		// One changed byte in any file is caught.
		for (const f of files) {
			const path = join(out, f);
			const original = readFileSync(path);
			const changed = Buffer.from(original);
			const at = Math.floor(changed.length / 2);
			changed[at] = changed[at] ^ 0x01;
			writeFileSync(path, changed);
			const r = spawnSync('sha256sum', ['-c', '--quiet', 'SHA256SUMS'], { cwd: out, encoding: 'utf8' });
			expect(r.status, f).not.toBe(0);
			expect(r.stdout, f).toContain(`${f}: FAILED`);
			writeFileSync(path, original);
		}
		expect(spawnSync('sha256sum', ['-c', 'SHA256SUMS'], { cwd: out }).status).toBe(0);
	});
	it('the archive holds the sign-off records as JSON, each signed content hashing to its signature', async () => {
		const out = join(dir, 'unzipped');
		const sums = readFileSync(join(out, 'SHA256SUMS'), 'utf8');
		const listed = sums
			.trim()
			.split('\n')
			.map((l) => l.slice(66));
		for (const f of [
			'signoff/release.json',
			'signoff/approvals.json',
			'signoff/findings.json',
			'signoff/signatures.json'
		])
			expect(listed).toContain(f);
		const read = (f: string) => JSON.parse(readFileSync(join(out, f), 'utf8'));
		const sigs = await testDb()('signatures').where({ project_id: team.project.id }).orderBy('id');
		// Every signature's signed content, its SHA-256 the one the database recorded.
		for (const x of sigs) {
			expect(listed).toContain(`signoff/signed/${x.id}.json`);
			expect(sha(readFileSync(join(out, `signoff/signed/${x.id}.json`)))).toBe(x.content_sha256);
		}
		const all = read('signoff/signatures.json');
		expect(
			all.signatures.map((s: { id: number; sha256: string; meaning: string; method: string }) => [
				s.id,
				s.sha256,
				s.meaning,
				s.method
			])
		).toEqual(sigs.map((x) => [Number(x.id), x.content_sha256, x.meaning, x.confirmed_by]));
		expect(all.source).toBe('read from the database when this package was built');

		const b = await testDb()('baselines').where({ id: baselineId }).first();
		const release = read('signoff/release.json');
		const rel = sigs.find((x) => x.act === 'baseline.release')!;
		expect(release.manifestSha256).toBe(b.manifest_hash);
		expect(release.signatures).toMatchObject([
			{
				id: Number(rel.id),
				sha256: rel.content_sha256,
				signsThisManifest: true,
				signer: { email: rel.signer_email }
			}
		]);

		const approvals = read('signoff/approvals.json');
		expect(approvals.reviewSource).toBe('as frozen in the baseline manifest');
		for (const r of b.manifest.review as {
			requirement: string;
			revision: number;
			state: string;
			approvedRevision: number | null;
		}[]) {
			const a = approvals.requirements.find((x: { requirement: string }) => x.requirement === r.requirement);
			expect(a.review).toEqual({
				revision: r.revision,
				state: r.state,
				approvedRevision: r.approvedRevision
			});
		}
		const approval = sigs.find((x) => x.act === 'requirement.approve')!;
		expect(
			approvals.requirements.find((x: { requirement: string }) => x.requirement === reqs[0].identifier)
				.approvals
		).toEqual([Number(approval.id)]);

		const findings = read('signoff/findings.json');
		const rows = await testDb()('findings').where({ project_id: team.project.id }).orderBy('number');
		expect(findings.findings.map((f: { id: number; state: string }) => [f.id, f.state])).toEqual(
			rows.map((f) => [Number(f.id), f.state])
		);
		expect(findings.deferred.source).toBe('as frozen in the baseline manifest');
		expect(findings.deferred.findings).toEqual(b.manifest.deferredFindings);
		const readme = readFileSync(join(out, 'README.txt'), 'utf8');
		expect(readme).toContain('signoff/signed/N.json');
		expect(readme).toContain(
			`all ${sigs.length} signed contents in signoff/signed/ reproduce their signed SHA-256`
		);
	});
});

describe('a draft package of the present state', () => {
	it('is marked DRAFT on every page', async () => {
		const res = await certifier.request(`/api/v1/projects/${team.project.key}/packages`, {
			method: 'POST',
			headers: { accept: 'application/json' }
		});
		expect(res.status).toBe(202);
		const { p } = await waitDone(certifier, res.headers.get('location')!);
		expect(p.status).toBe('done');
		const file = join(dir, 'draft.pdf');
		writeFileSync(file, await download(certifier, p.report!.href));
		const pages = Number(/Pages:\s+(\d+)/.exec(sh('pdfinfo', [file]))![1]);
		for (let n = 1; n <= pages; n++)
			expect(sh('pdftotext', ['-f', String(n), '-l', String(n), file, '-'])).toContain('DRAFT');
		const now = await testDb()('data_packages')
			.where({ id: (p as unknown as { id: number }).id })
			.first();
		expect(now.baseline_id).toBeNull();
	}, 300_000);
});
