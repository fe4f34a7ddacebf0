import type { Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { ENGINE_VERSION } from '../../src/lib/stability/index';
import {
	createModel,
	createModelVersion,
	createRequirement,
	createRun,
	createSpec,
	createTeam,
	lagModel
} from '../factories';
import { signInPage as signIn, useBrowser } from '../helpers/browser';
import { env } from '../helpers/env';
import { CUBE, pauseHarnessWorker, resumeHarnessWorker } from '../integration/models/helpers';

// An analyst publishes a version through the form, watching the in-browser preview; the requirement page
// then shows the re-run pending, and the verdict once the worker has run it.

const browser = useBrowser({ after: resumeHarnessWorker });

/** The analysis state the requirement page shows (the live panel if the page has it, else the badge). */
async function shownState(page: Page): Promise<string | null> {
	const live = page.locator('[data-testid=analysis-panel] [data-state]').first();
	if (await live.count()) return live.getAttribute('data-state');
	const badge = page.locator('[data-analysis-state]').first();
	return (await badge.count()) ? badge.getAttribute('data-analysis-state') : null;
}

describe('publishing a model version in the browser', () => {
	it('previews poles and the Nyquist plot, publishes, and the requirement goes pending then not proved', async () => {
		const team = await createTeam();
		const model = await createModel(team.project.id, {
			ownerId: team.users.analyst.id,
			name: 'e2e elevator loop'
		});
		await createModelVersion(model.id, lagModel(1, 1));
		const req = await createRequirement(team.project.id, {
			ownerId: team.users.engineer.id,
			title: 'Elevator loop absolute stability'
		});
		// Sector [0, 5]: 1/(s+1) passes (Re G > 0); 1/(s+1)^3 fails (proved bound 4, see integration/models/helpers.ts).
		await createSpec(req.id, { modelId: model.id, check: { type: 'circle', sector: [0, 5] } });
		await createRun(req.id, { engineVersion: ENGINE_VERSION, verdict: 'pass' });

		const ctx = await browser().newContext();
		const page = await ctx.newPage();
		try {
			await signIn(page, team.users.analyst.email, team.users.analyst.password);
			await page.goto(`${env.baseUrl}/p/${team.project.key}/models/${model.id}/publish?entry=json`);
			await page.fill('#note', 'Two more lags from the actuator rig');
			await page.fill('#operatingPoints', JSON.stringify([{ label: 'nominal', model: CUBE }], null, 2));
			// The preview is computed in the browser: three poles at -1, and the requirement's forbidden region.
			const poles = page.locator('[data-testid=preview-poles] li');
			await expect.poll(() => poles.allTextContents(), { timeout: 10_000 }).toEqual(['-1', '-1', '-1']);
			await expect
				.poll(() =>
					page.locator('[data-testid=live-preview] [data-testid=nyquist-plot] figcaption').textContent()
				)
				.toContain(req.identifier);
			expect(await page.locator('[data-testid=live-preview] svg path').count()).toBeGreaterThan(2);

			// Hold the worker so the pending state is observable, then publish.
			pauseHarnessWorker();
			await page.click('button:has-text("Publish version 2")');
			await page.waitForURL(`**/models/${model.id}/v/2`);
			expect(await page.textContent('[data-change=changed]')).toContain('nominal');

			await page.goto(`${env.baseUrl}/p/${team.project.key}/requirements/${req.id}`);
			await expect.poll(() => shownState(page), { timeout: 10_000 }).toBe('pending');
			resumeHarnessWorker();
			const live = (await page.locator('[data-testid=analysis-panel]').count()) > 0;
			await expect
				.poll(
					async () => {
						// The panel updates by itself; the server-rendered badge needs a reload.
						if (!live) await page.reload();
						return shownState(page);
					},
					{ timeout: 30_000, interval: 1_000 }
				)
				.toBe('not-proved');
			// The header badge follows the panel, without a reload.
			if (live) {
				const header = page.locator('h1 + p [data-state]').first();
				await expect.poll(() => header.getAttribute('data-state'), { timeout: 10_000 }).toBe('not-proved');
			}
		} finally {
			resumeHarnessWorker();
			await ctx.close();
		}
	}, 90_000);

	it('publishes through the form with JavaScript off', async () => {
		const team = await createTeam();
		const model = await createModel(team.project.id, {
			ownerId: team.users.analyst.id,
			name: 'e2e no-script loop'
		});
		const ctx = await browser().newContext({ javaScriptEnabled: false });
		const page = await ctx.newPage();
		try {
			await signIn(page, team.users.analyst.email, team.users.analyst.password);
			await page.goto(`${env.baseUrl}/p/${team.project.key}/models/${model.id}/publish?entry=json`);
			await page.fill(
				'#operatingPoints',
				'[{"label": "nominal", "model": {"kind": "tf", "num": [1], "den": [0, 1]}}]'
			);
			await page.click('button:has-text("Publish version 1")');
			// The engine's schema refuses a leading zero; the message is shown at the field.
			await page.waitForSelector('[role=alert]');
			expect(await page.textContent('body')).toContain('leading denominator coefficient is zero');
			await page.fill('#operatingPoints', JSON.stringify([{ label: 'nominal', model: CUBE }]));
			await page.click('button:has-text("Publish version 1")');
			await page.waitForURL(`**/models/${model.id}/v/1`);
			expect(await page.textContent('[data-testid=version-hash]')).toMatch(/^[0-9a-f]{64}$/);
		} finally {
			await ctx.close();
		}
	}, 60_000);
});
