import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
	closeTestDb,
	createModel,
	createModelVersion,
	createComputedRun,
	createRequirement,
	createSpec,
	createTeam
} from '../factories';
import { launchBrowser } from '../helpers/browser';
import { env } from '../helpers/env';
import { signedIn } from '../helpers/http';

// A certifier opens a frozen baseline, generates its data package, watches the progress on the page
// and downloads the report and the archive; the downloads' SHA-256 are the ones the page shows. Two
// report pages (the cover, a requirement with its Nyquist plot) are rendered with pdftoppm into
// /tmp/shots-package/ for a person to look at. The test database starts empty (no demo seed), so the
// baseline is frozen here from a demo-like project: runs computed by the engine, as the worker does.

const SHOTS = '/tmp/shots-package';
let browser: Browser;
beforeAll(async () => {
	browser = await launchBrowser();
});
afterAll(async () => {
	await browser?.close();
	await closeTestDb();
});

// Keys in sorted order, so the factory's hash is the canonical one. Lightly damped fourth-order loop
// (s^2 + 0.1 s + 4)(s^2 + 1.2 s + 1) and a double-pole point.
const CONTENT = {
	operatingPoints: [
		{ label: 'hover', model: { den: [1, 1.3, 5.12, 4.9, 4], kind: 'tf', num: [4] } },
		{ label: 'cruise', model: { den: [1, 2, 5], kind: 'tf', num: [5] } }
	]
};

describe('data package in the browser', () => {
	it('a certifier generates the package of a baseline, sees its progress and downloads both files', async () => {
		const team = await createTeam();
		const pid = team.project.id;
		const model = await createModel(pid, { name: 'Yaw damper' });
		await createModelVersion(model.id, CONTENT);
		const checks = [
			{ type: 'circle', sector: [0, 0.5] },
			{ type: 'circle', sector: [0.2, 2] },
			{ type: 'popov', sector: [0, 1] }
		];
		for (const [i, check] of checks.entries()) {
			const r = await createRequirement(pid, {
				title: `Yaw damper absolute stability ${i + 1}`,
				statement: `The yaw damper loop shall remain absolutely stable for every gain in the sector [${check.sector[0]}, ${check.sector[1]}].`,
				methods: ['analysis'],
				status: 'approved'
			});
			await createSpec(r.id, { modelId: model.id, check });
			await createComputedRun(r.id, check, CONTENT);
		}
		const api = await signedIn(team.users.certifier.email, team.users.certifier.password);
		const fr = await api.request(`/api/v1/projects/${team.project.key}/baselines`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', accept: 'application/json' },
			body: JSON.stringify({
				label: 'Design review',
				note: 'for the data package',
				password: team.users.certifier.password
			})
		});
		expect(fr.status).toBe(201);
		const baselineId = ((await fr.json()) as { id: number }).id;

		const ctx = await browser.newContext({ acceptDownloads: true });
		const page = await ctx.newPage();
		const target = `/p/${team.project.key}/baselines/${baselineId}`;
		await page.goto(`${env.baseUrl}/signin?redirectTo=${encodeURIComponent(target)}`);
		await page.fill('#email', team.users.certifier.email);
		await page.fill('#password', team.users.certifier.password);
		await page.click('button:has-text("Sign in")');
		await page.waitForURL(`**${target}`, { waitUntil: 'commit' });

		await page.click('[data-testid=generate-package]');
		// Progress is shown while it is queued or running, then the links.
		const item = page.locator('[data-testid=package]').first();
		await expect
			.poll(() => item.getAttribute('data-status'), { timeout: 20_000 })
			.toMatch(/queued|running|done/);
		const sawProgress = (await item.getAttribute('data-status')) !== 'done';
		if (sawProgress) await expect.poll(() => page.locator('[data-testid=package-progress]').count()).toBe(1);
		await expect.poll(() => item.getAttribute('data-status'), { timeout: 240_000 }).toBe('done');
		expect(sawProgress).toBe(true);

		const text = await item.innerText();
		const shown = [...text.matchAll(/SHA-256 ([0-9a-f]{64})/g)].map((m) => m[1]);
		expect(shown).toHaveLength(2);
		const files: Buffer[] = [];
		for (const which of ['download-report', 'download-archive']) {
			const [dl] = await Promise.all([page.waitForEvent('download'), page.click(`[data-testid=${which}]`)]);
			files.push(readFileSync((await dl.path())!));
		}
		const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex');
		expect(files.map(sha)).toEqual(shown);
		expect(files[0].subarray(0, 5).toString()).toBe('%PDF-');
		expect(files[1].subarray(0, 2).toString()).toBe('PK');

		// Two pages to look at: the cover and the first requirement's plot page.
		mkdirSync(SHOTS, { recursive: true });
		const pdf = `${SHOTS}/e2e-report.pdf`;
		writeFileSync(pdf, files[0]);
		const layout = execFileSync('pdftotext', ['-layout', pdf, '-'], { encoding: 'utf8' }).split('\f');
		const plotPage = layout.findIndex((p) => p.includes('Nyquist plot')) + 1;
		expect(plotPage).toBeGreaterThan(0);
		execFileSync('pdftoppm', [
			'-r',
			'80',
			'-png',
			'-f',
			'1',
			'-l',
			'1',
			'-singlefile',
			pdf,
			`${SHOTS}/cover`
		]);
		execFileSync('pdftoppm', [
			'-r',
			'80',
			'-png',
			'-f',
			String(plotPage),
			'-l',
			String(plotPage),
			'-singlefile',
			pdf,
			`${SHOTS}/requirement-plot`
		]);
		await ctx.close();
	}, 360_000);
});
