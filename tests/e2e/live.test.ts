import type { Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import {
	createEvidence,
	createModel,
	createModelVersion,
	createRequirement,
	createRun,
	createSpec,
	createTeam,
	lagModel
} from '../factories';
import { ENGINE_VERSION } from '../../src/lib/stability/index';
import { signInPage as signIn, useBrowser } from '../helpers/browser';
import { env } from '../helpers/env';
import { signedIn } from '../helpers/http';
import { CUBE, pauseHarnessWorker, points, resumeHarnessWorker } from '../integration/models/helpers';

// Live pages: a requirement page, the requirement list and the trace matrix stay open while an engineer
// saves a specification (on the page itself, then through the API). Each shows "pending" while the run
// is queued (the harness worker is held so the state can be seen) and the verdict once it has run,
// without a reload.
//
// G(s) = 1/(s+1)^3: the circle criterion with k1 = 0 proves k2 < 4 (tests/integration/models/helpers.ts,
// Khalil, Nonlinear Systems, 3rd ed., Theorem 7.1), so sector [0, 3] is verified and [0, 5] is failing.

const browser = useBrowser({ after: resumeHarnessWorker });

/** Marks the document; a reload or a full navigation would lose the mark. */
const mark = (page: Page) => page.evaluate(() => ((window as unknown as { lwMark: number }).lwMark = 1));
const stillMarked = (page: Page) =>
	page.evaluate(() => (window as unknown as { lwMark?: number }).lwMark === 1);

describe('open pages follow a saved specification without a reload', () => {
	it('requirement page (panel and header), requirement list and trace matrix show pending, then the verdict', async () => {
		const team = await createTeam();
		const model = await createModel(team.project.id, { ownerId: team.users.analyst.id, name: 'live loop' });
		await createModelVersion(model.id, { operatingPoints: points(CUBE) });
		const req = await createRequirement(team.project.id, {
			ownerId: team.users.engineer.id,
			title: 'Live pitch loop stability'
		});
		const ctx = await browser().newContext();
		const reqPage = await ctx.newPage();
		try {
			await signIn(reqPage, team.users.engineer.email, team.users.engineer.password);
			const listPage = await ctx.newPage();
			const tracePage = await ctx.newPage();
			await listPage.goto(`${env.baseUrl}/p/${team.project.key}/requirements`);
			await tracePage.goto(`${env.baseUrl}/p/${team.project.key}/trace`);
			await reqPage.goto(`${env.baseUrl}/p/${team.project.key}/requirements/${req.id}`);

			const panelState = () =>
				reqPage.locator('[data-testid=analysis-panel] [data-state]').first().getAttribute('data-state');
			const headerState = () => reqPage.locator('h1 + p [data-state]').first().getAttribute('data-state');
			const listState = async () => {
				await listPage.bringToFront();
				return listPage
					.locator(`tr:has(a:text-is("${req.identifier}")) [data-state]`)
					.first()
					.getAttribute('data-state');
			};
			const traceState = async () => {
				await tracePage.bringToFront();
				return tracePage
					.locator(`[data-testid=matrix-row]:has(a:text-is("${req.identifier}"))`)
					.first()
					.getAttribute('data-analysis-state');
			};
			const all = async () => {
				const out = {
					panel: await panelState(),
					header: await headerState(),
					list: await listState(),
					trace: await traceState()
				};
				await reqPage.bringToFront();
				return out;
			};
			const same = (state: string) => ({ panel: state, header: state, list: state, trace: state });

			await reqPage.bringToFront();
			await expect.poll(panelState, { timeout: 10_000 }).toBe('not-analysed');
			await expect.poll(all, { timeout: 10_000 }).toEqual(same('not-analysed'));
			for (const p of [reqPage, listPage, tracePage]) await mark(p);

			// 1. Saved on the page itself (the form posts with use:enhance).
			pauseHarnessWorker();
			await reqPage.selectOption('#checkType', 'circle');
			await reqPage.fill('#k1', '0');
			await reqPage.fill('#k2', '3');
			await reqPage.click('button:has-text("Save the specification")');
			await expect.poll(all, { timeout: 15_000 }).toEqual(same('pending'));
			expect(
				await reqPage.locator('[data-testid=analysis-panel] [role=status]').first().textContent()
			).toContain('queued or running');
			resumeHarnessWorker();
			await expect.poll(all, { timeout: 30_000, interval: 500 }).toEqual(same('verified'));
			await expect
				.poll(() => reqPage.locator('[data-testid=analysis-panel]').textContent())
				.toContain('sector [0, 3]');

			// 2. Saved through the API by another client, while the pages stay open.
			const api = await signedIn(team.users.engineer.email, team.users.engineer.password);
			pauseHarnessWorker();
			const res = await api.json(`/api/v1/requirements/${req.id}/specification`, 'PUT', {
				check: { type: 'circle', sector: [0, 5] },
				modelId: model.id,
				baseVersion: 1
			});
			expect(res.status).toBe(201);
			await expect.poll(all, { timeout: 15_000 }).toEqual(same('pending'));
			resumeHarnessWorker();
			await expect.poll(all, { timeout: 30_000, interval: 500 }).toEqual(same('not-proved'));
			// The panel names the new sector, not the old one.
			const panelText = await reqPage.locator('[data-testid=analysis-panel]').textContent();
			expect(panelText).toContain('sector [0, 5]');
			expect(panelText).not.toContain('sector [0, 3]');
			// The page's own text still shows version 1 (the form keeps what may be typed there) and says so.
			const note = await reqPage.locator('[data-testid=spec-changed]').textContent();
			expect(note?.replace(/\s+/g, ' ')).toContain('version 2 is in force');

			// None of the three pages was reloaded.
			for (const p of [reqPage, listPage, tracePage]) expect(await stillMarked(p)).toBe(true);
		} finally {
			resumeHarnessWorker();
			await ctx.close();
		}
	}, 120_000);
});

describe('open pages follow a model publish and an evidence review without a reload', () => {
	it('the requirement page and the trace matrix show the re-run pending, the new verdict, then the review', async () => {
		const team = await createTeam();
		const model = await createModel(team.project.id, {
			ownerId: team.users.analyst.id,
			name: 'live rig loop'
		});
		await createModelVersion(model.id, lagModel(1, 1));
		const req = await createRequirement(team.project.id, {
			ownerId: team.users.engineer.id,
			title: 'Live roll loop stability',
			methods: ['analysis', 'test']
		});
		// 1/(s+1) proves every sector [0, k] (Re G > 0); 1/(s+1)^3 proves only k2 < 4 (see above).
		await createSpec(req.id, { modelId: model.id, check: { type: 'circle', sector: [0, 5] } });
		await createRun(req.id, { engineVersion: ENGINE_VERSION, verdict: 'pass' });
		const evidence = await createEvidence(team.project.id, [req.id], { title: 'Roll rig sweep' });

		const ctx = await browser().newContext();
		const reqPage = await ctx.newPage();
		try {
			await signIn(reqPage, team.users.viewer.email, team.users.viewer.password);
			const tracePage = await ctx.newPage();
			await tracePage.goto(`${env.baseUrl}/p/${team.project.key}/trace`);
			await reqPage.goto(`${env.baseUrl}/p/${team.project.key}/requirements/${req.id}`);
			const row = () =>
				tracePage.locator(`[data-testid=matrix-row]:has(a:text-is("${req.identifier}"))`).first();
			const shown = async () => {
				await tracePage.bringToFront();
				const trace = await row().getAttribute('data-analysis-state');
				await reqPage.bringToFront();
				return {
					panel: await reqPage
						.locator('[data-testid=analysis-panel] [data-state]')
						.first()
						.getAttribute('data-state'),
					header: await reqPage.locator('h1 + p [data-state]').first().getAttribute('data-state'),
					trace
				};
			};
			const same = (state: string) => ({ panel: state, header: state, trace: state });
			await expect.poll(shown, { timeout: 15_000 }).toEqual(same('verified'));
			for (const p of [reqPage, tracePage]) await mark(p);

			// An analyst publishes a version that fails the sector: pending, then failing.
			const analyst = await signedIn(team.users.analyst.email, team.users.analyst.password);
			pauseHarnessWorker();
			const pub = await analyst.json(
				`/api/v1/projects/${team.project.key}/models/${model.id}/versions`,
				'POST',
				{ note: 'rig lags', operatingPoints: points(CUBE) }
			);
			expect(pub.status).toBe(201);
			await expect.poll(shown, { timeout: 15_000 }).toEqual(same('pending'));
			resumeHarnessWorker();
			await expect.poll(shown, { timeout: 30_000, interval: 500 }).toEqual(same('not-proved'));

			// A certifier accepts the test evidence: the evidence panel and the matrix row follow.
			const review = () =>
				reqPage
					.locator('section[aria-label="Test evidence"] [data-review]')
					.first()
					.getAttribute('data-review');
			expect(await review()).toBe('pending');
			const certifier = await signedIn(team.users.certifier.email, team.users.certifier.password);
			const res = await certifier.json(`/api/v1/evidence/${evidence.id}/review`, 'POST', {
				password: team.users.certifier.password,
				decision: 'accepted',
				comment: 'Matches the rig log.',
				revision: 1
			});
			expect(res.status).toBe(201);
			await expect.poll(review, { timeout: 15_000 }).toBe('accepted');
			// The combined state the panel shows is the one the server now gives.
			const api = await (
				await certifier.get(`/api/v1/projects/${team.project.key}/evidence?requirement=${req.id}`)
			).json();
			await expect
				.poll(() =>
					reqPage
						.locator('section[aria-label="Test evidence"] [data-combined]')
						.first()
						.getAttribute('data-combined')
				)
				.toBe(api.requirement.state);
			await tracePage.bringToFront();
			await expect.poll(() => row().textContent(), { timeout: 15_000 }).toContain('1/1 accepted');

			for (const p of [reqPage, tracePage]) expect(await stillMarked(p)).toBe(true);
		} finally {
			resumeHarnessWorker();
			await ctx.close();
		}
	}, 120_000);
});
