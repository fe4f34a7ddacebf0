import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import knexFactory from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { env } from '../../helpers/env';
import { withoutCreationTime, xmllint } from './reqif-helpers';

// Issue 14, item 4: the VX7 demo (scripts/seed.ts, in a scratch database of the test cluster) exported
// as ReqIF, imported into an empty project of the same name with the same models, exported again.
// An import never approves (approval is a signed review in Loopwarden): the imported requirements are
// drafts, so the second file is the first with every Status a draft, and otherwise byte for byte equal.
const scratch = 'loopwarden_reqif_round_trip';
const url = (name: string) => {
	const u = new URL(env.databaseUrl);
	u.pathname = '/' + name;
	return u.toString();
};
const admin = knexFactory({ client: 'pg', connection: url('postgres') });
const tsx = (args: string[]) =>
	spawnSync('node_modules/.bin/tsx', args, {
		env: { ...process.env, DATABASE_URL: url(scratch), SMTP_URL: '' },
		encoding: 'utf8',
		timeout: 300_000,
		maxBuffer: 256 * 1024 * 1024
	});

interface Content {
	reqs: Record<string, unknown>[];
	links: { child: string; parent: string }[];
	specs: Record<string, unknown>[];
}
let out: {
	first: string;
	second: string;
	third: string;
	preview: { counts: Record<string, number>; problems: unknown[] };
	confirmed: { created: string[]; revised: string[]; links: number; specifications: number };
	again: { counts: Record<string, number>; problems: unknown[] };
	againResult: { created: string[]; revised: string[]; links: number; specifications: number };
	self: { counts: Record<string, number>; problems: unknown[] };
	selfResult: { created: string[]; revised: string[]; links: number; specifications: number };
	sourceRevisionsBefore: number;
	sourceRevisionsAfter: number;
	statusNotes: [string, string, string][];
	source: Content;
	target: Content;
	targetRevisionSum: number;
	targetRuns: number;
	importEvents: number;
};

beforeAll(async () => {
	await admin.raw(`drop database if exists ${scratch} with (force)`);
	await admin.raw(`create database ${scratch}`);
	const m = tsx(['node_modules/knex/bin/cli.js', '--knexfile', 'knexfile.ts', 'migrate:latest']);
	expect(m.status, m.stderr).toBe(0);
	const s = tsx(['scripts/seed.ts']);
	expect(s.status, s.stderr).toBe(0);
	const r = tsx(['tests/integration/interchange/round-trip.script.ts']);
	expect(r.status, r.stderr).toBe(0);
	out = JSON.parse(r.stdout.trim().split('\n').pop()!);
}, 600_000);
afterAll(async () => {
	await admin.raw(`drop database if exists ${scratch} with (force)`);
	await admin.destroy();
});

/**
 * The file with every requirement's Status a draft: the status attribute's values are references to the
 * enumeration literals lw-dt-status-* (OMG ReqIF 1.2, ATTRIBUTE-VALUE-ENUMERATION / ENUM-VALUE-REF,
 * from memory); the literals' own definitions (IDENTIFIER="...") are left as they are.
 */
const asDrafts = (s: string) =>
	s.replace(/lw-dt-status-[a-z-]+(?=<\/ENUM-VALUE-REF>)/g, 'lw-dt-status-draft');
const withoutState = (reqs: Record<string, unknown>[]) =>
	reqs.map((r) => {
		const rest = { ...r };
		delete rest.review_state;
		delete rest.approved_revision;
		return rest;
	});

describe('VX7 to ReqIF and back', () => {
	it('the export is valid ReqIF 1.2 (the OMG schema, xmllint)', () => {
		const dir = mkdtempSync(join(tmpdir(), 'lw-reqif-'));
		const f = join(dir, 'vx7.reqif');
		writeFileSync(f, out.first);
		expect(xmllint(f)).toEqual({ ok: true, output: expect.stringContaining('validates') });
		expect(out.first).toContain('<SPEC-RELATION ');
		expect(out.first).toMatch(/<SPEC-HIERARCHY [^>]*><CHILDREN>/);
	});

	it('imports into an empty project with no problems: every requirement new, every link and specification made', () => {
		expect(out.preview.problems).toEqual([]);
		expect(out.preview.counts.new).toBe(out.source.reqs.length);
		expect(out.preview.counts.new).toBeGreaterThan(10);
		expect(out.confirmed.created).toHaveLength(out.source.reqs.length);
		expect(out.confirmed.links).toBe(out.source.links.length);
		expect(out.confirmed.specifications).toBe(out.source.specs.length);
		// Stability specifications queue their analyses like any edit.
		expect(out.targetRuns).toBeGreaterThan(0);
	});

	it('the demo has approved requirements, and the file says so', () => {
		const approved = out.source.reqs.filter((r) => r.review_state === 'approved');
		expect(approved.length).toBeGreaterThan(0);
		expect(out.first).toContain('<ENUM-VALUE-REF>lw-dt-status-approved</ENUM-VALUE-REF>');
		// The preview shows each file status that is not applied, and what the requirement will be here.
		expect(out.statusNotes.length).toBeGreaterThanOrEqual(approved.length);
		expect(out.statusNotes.every(([, , willBe]) => willBe === 'draft')).toBe(true);
		expect(out.statusNotes.map(([id]) => id)).toEqual(
			expect.arrayContaining(approved.map((r) => r.identifier))
		);
		expect(out.preview.counts.statusNotApplied).toBe(out.statusNotes.length);
	});

	it('exporting the imported project gives the same file with every status a draft, apart from the header creation time', () => {
		expect(out.second).not.toBe('');
		expect(out.second).not.toContain('<ENUM-VALUE-REF>lw-dt-status-approved</ENUM-VALUE-REF>');
		expect(withoutCreationTime(out.second)).toBe(asDrafts(withoutCreationTime(out.first)));
	});

	it('the database holds the same requirements, texts, links and specifications; every imported one a draft, none approved', () => {
		expect(withoutState(out.target.reqs)).toEqual(withoutState(out.source.reqs));
		expect(out.target.reqs.map((r) => [r.review_state, r.approved_revision])).toEqual(
			out.target.reqs.map(() => ['draft', null])
		);
		expect(out.target.links).toEqual(out.source.links);
		expect(out.target.specs).toEqual(out.source.specs);
	});

	it('importing the same file again changes nothing', () => {
		expect(out.again.problems).toEqual([]);
		expect(out.again.counts).toMatchObject({ new: 0, changed: 0, unchanged: out.source.reqs.length });
		expect(out.againResult).toMatchObject({ created: [], revised: [], links: 0, specifications: 0 });
		// One revision per requirement (all made by the first import).
		expect(out.targetRevisionSum).toBe(out.source.reqs.length);
		expect(withoutCreationTime(out.third)).toBe(withoutCreationTime(out.second));
		expect(out.importEvents).toBe(2);
	});

	it('importing the VX7 file back into VX7 changes nothing (its statuses agree, nothing is noted)', () => {
		expect(out.self.problems).toEqual([]);
		expect(out.self.counts).toMatchObject({
			new: 0,
			changed: 0,
			unchanged: out.source.reqs.length,
			statusNotApplied: 0
		});
		expect(out.selfResult).toMatchObject({ created: [], revised: [], links: 0, specifications: 0 });
		expect(out.sourceRevisionsAfter).toBe(out.sourceRevisionsBefore);
	});
});
