import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { ENGINE_VERSION } from '../../src/lib/stability/index';
import {
	createEvidence,
	createModel,
	createModelVersion,
	createRequirement,
	createRun,
	createSpec,
	createTeam,
	lagModel,
	linkRequirements
} from '../factories';
import { useBrowser } from '../helpers/browser';
import { env } from '../helpers/env';
import { signedIn } from '../helpers/http';

// A certifier filters the trace matrix, exports the spreadsheet (the download is opened with exceljs),
// freezes a baseline, and compares it with the current state after an analyst publishes a model version.

const browser = useBrowser();

describe('trace matrix, export and baseline in the browser', () => {
	it('filters, exports, freezes and compares', async () => {
		const team = await createTeam();
		const pid = team.project.id;
		const model = await createModel(pid, { name: 'Elevon actuator', ownerId: team.users.analyst.id });
		const v1 = await createModelVersion(model.id, lagModel(1, 0.1));
		const sys = await createRequirement(pid, {
			title: 'Pitch axis stability',
			level: 'system',
			methods: ['analysis', 'test']
		});
		await createSpec(sys.id, { modelId: model.id, check: { type: 'circle', sector: [0.5, 2] } });
		await createRun(sys.id, {
			engineVersion: ENGINE_VERSION,
			verdict: 'pass',
			result: { type: 'circle', verdict: 'pass', margin: 0.3, numbers: {}, explanation: 'ok' }
		});
		await createEvidence(pid, [sys.id], {
			title: 'Elevon rig sweep',
			review: 'accepted',
			reviewer: team.users.certifier
		});
		const sub = await createRequirement(pid, { title: 'Elevon servo sector', level: 'subsystem' });
		await linkRequirements(sub.id, sys.id);
		await createSpec(sub.id, { modelId: model.id, check: { type: 'circle', sector: [0.5, 2] } });
		await createRun(sub.id, {
			engineVersion: ENGINE_VERSION,
			verdict: 'pass',
			result: { type: 'circle', verdict: 'pass', margin: 0.2, numbers: {}, explanation: 'ok' }
		});
		const loop = await createRequirement(pid, {
			title: 'Wiring inspection',
			level: 'loop',
			methods: ['inspection']
		});

		const ctx = await browser().newContext({ acceptDownloads: true });
		const page = await ctx.newPage();
		await page.goto(`${env.baseUrl}/signin?redirectTo=${encodeURIComponent(`/p/${team.project.key}/trace`)}`);
		await page.fill('#email', team.users.certifier.email);
		await page.fill('#password', team.users.certifier.password);
		await page.click('button:has-text("Sign in")');
		await page.waitForURL(`**/p/${team.project.key}/trace`, { waitUntil: 'commit' });

		// All three rows, then only the system-level one.
		await page.waitForSelector('[data-testid=matrix-row]');
		await expect.poll(() => page.locator('[data-testid=matrix-row]').count()).toBe(3);
		await page.selectOption('select[name=level]', 'system');
		await expect.poll(() => page.locator('[data-testid=matrix-row]').count()).toBe(1);
		const row = page.locator('[data-testid=matrix-row]').first();
		expect(await row.textContent()).toContain(sys.identifier);
		expect(await row.textContent()).toContain('Verified by analysis and test');
		expect(
			await page.getAttribute(`a[href="/p/${team.project.key}/requirements/${sys.id}"]`, 'href')
		).toBeTruthy();
		expect(await page.textContent('[role=note]')).toContain('engineering judgement');

		// The export carries the same filter.
		const [download] = await Promise.all([
			page.waitForEvent('download'),
			page.click('[data-testid=export-xlsx]')
		]);
		expect(download.suggestedFilename()).toMatch(new RegExp(`^${team.project.key}-trace-matrix-.*\\.xlsx$`));
		const wb = new ExcelJS.Workbook();
		await wb.xlsx.readFile(await download.path());
		const matrix = wb.getWorksheet('Trace matrix')!;
		const ids: string[] = [];
		matrix.eachRow((r, n) => {
			if (n > 1) ids.push(String(r.getCell(1).value));
		});
		expect(ids).toEqual([sys.identifier]);
		expect(String(matrix.getRow(2).getCell(12).value)).toBe(v1.hash);
		const cover = wb.getWorksheet('Cover')!;
		const coverText = cover.getSheetValues().flat().map(String).join('\n');
		expect(coverText).toContain(team.users.certifier.email);
		expect(coverText).toContain('level system');

		// Freeze.
		await page.goto(`${env.baseUrl}/p/${team.project.key}/baselines`);
		await page.fill('#label', 'Submission issue 1');
		// The freeze is the baseline's signed release: the password is re-entered.
		await page.fill('#release-password', team.users.certifier.password);
		await page.click('button:has-text("Freeze and sign the release")');
		await page.waitForURL(/\/baselines\/\d+$/);
		const hash = (await page.textContent('[data-testid=manifest-hash]'))!.trim();
		expect(hash).toMatch(/^[0-9a-f]{64}$/);
		expect(await page.textContent('main')).toContain('The stored manifest hashes to this SHA-256.');

		// An analyst publishes a new version through the models API.
		const analyst = await signedIn(team.users.analyst.email, team.users.analyst.password);
		const res = await analyst.json(
			`/api/v1/projects/${team.project.key}/models/${model.id}/versions`,
			'POST',
			{
				note: 'stiffer linkage',
				operatingPoints: [{ label: 'cruise', model: { kind: 'tf', num: [3], den: [0.1, 1] } }]
			}
		);
		expect(res.status).toBe(201);

		await page.click('a:has-text("Compare with now")');
		await page.waitForURL(/\/baselines\/compare\?/);
		const comparison = (await page.textContent('[data-testid=comparison]'))!;
		expect(comparison).toContain('1 model versions added');
		expect(comparison).toContain(`Elevon actuator v1 (${v1.hash.slice(0, 12)})`);
		expect(comparison).toContain('Elevon actuator v2');
		const changed = await page.locator('[data-testid=change-row]').allTextContents();
		expect(changed.some((t) => t.includes(sys.identifier) && t.includes('model version'))).toBe(true);
		expect(changed.some((t) => t.includes(sub.identifier))).toBe(true);
		expect(changed.some((t) => t.includes(loop.identifier))).toBe(false);
		await ctx.close();
	}, 120_000);
});
