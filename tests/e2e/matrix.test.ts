import { mkdirSync } from 'node:fs';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compareIdentifiers } from '../../src/lib/requirements/order';
import {
	closeTestDb,
	createModel,
	createModelVersion,
	createRequirement,
	createSpec,
	createTeam,
	lagModel,
	linkRequirements
} from '../factories';
import { launchBrowser, signInPage } from '../helpers/browser';
import { env } from '../helpers/env';

// A viewer at 1440 x 900 chooses the trace matrix's columns, reloads and finds the choice kept; the
// identifier, state and open items are in view without scrolling sideways, and stay in view when
// the table scrolls; the scroll box is reached with Tab and labelled. Grouped by parent, the count says
// what is shown. The trace graph filters by level and state and tells each node in full on keyboard
// focus and on hover. LW_SHOTS_DIR, when set, receives screenshots of both pages.

let browser: Browser;
beforeAll(async () => {
	browser = await launchBrowser();
});
afterAll(async () => {
	await browser?.close();
	await closeTestDb();
});

// The page loads its rows after the first paint; on a busy machine that takes more than vitest's 1 s default.
const poll = <T>(fn: () => T | Promise<T>) => expect.poll(fn, { timeout: 20_000, interval: 100 });

const MODEL_NAME = 'Elevon actuator, left outboard';

async function seed() {
	const team = await createTeam();
	const pid = team.project.id;
	const model = await createModel(pid, { name: MODEL_NAME });
	await createModelVersion(model.id, lagModel(1, 0.1));
	const tops = [];
	for (let i = 0; i < 3; i++)
		tops.push(await createRequirement(pid, { title: `Loop stability of axis ${i + 1}`, level: 'system' }));
	const subs = [];
	for (let i = 0; i < 9; i++) {
		const r = await createRequirement(pid, {
			title: `Sector bound of actuator channel ${i + 1} with a title long enough to need room`,
			level: 'subsystem',
			methods: ['analysis', 'test']
		});
		await linkRequirements(r.id, tops[i % 3].id);
		subs.push(r);
	}
	await createSpec(subs[0].id, { modelId: model.id, check: { type: 'circle', sector: [0.5, 2] } });
	return { team, tops, subs, model };
}

async function shot(page: Page, name: string) {
	const dir = process.env.LW_SHOTS_DIR;
	if (!dir) return;
	mkdirSync(dir, { recursive: true });
	await page.screenshot({ path: `${dir}/${name}.png`, fullPage: false });
}

const box = async (page: Page, selector: string) => {
	const b = await page.locator(selector).first().boundingBox();
	if (!b) throw new Error(`${selector} is not on the page`);
	return b;
};

describe('trace matrix columns and layout at 1440 px', () => {
	it('keeps the chosen columns per user, keeps identifier and state in view, labels the scroll box', async () => {
		const { team, tops } = await seed();
		const key = team.project.key;
		const ctx = await browser.newContext({ viewport: { width: 1440, height: 900 } });
		const page = await ctx.newPage();
		await signInPage(page, team.users.viewer.email, team.users.viewer.password);
		await page.goto(`${env.baseUrl}/p/${key}/trace`);
		await poll(() => page.locator('[data-testid=matrix-row]').count()).toBe(12);

		// The scroll box: a labelled region, reached from the last filter control with Tab.
		const scroller = page.locator('[data-testid=matrix-scroller]');
		expect(await scroller.getAttribute('role')).toBe('region');
		expect(await scroller.getAttribute('aria-label')).toMatch(/^Trace matrix, 12 requirements/);
		expect(await scroller.getAttribute('tabindex')).toBe('0');
		await page.focus('[data-testid=column-chooser] summary');
		await page.keyboard.press('Tab');
		expect(await page.evaluate(() => document.activeElement?.getAttribute('data-testid'))).toBe(
			'matrix-scroller'
		);

		// At 1440 px the identifier, state and open items show without sideways scrolling.
		const area = await box(page, '[data-testid=matrix-scroller]');
		for (const c of ['identifier', 'state', 'blockers']) {
			const h = await box(page, `th[data-column=${c}]`);
			expect(h.x, c).toBeGreaterThanOrEqual(area.x);
			expect(h.x + h.width, c).toBeLessThanOrEqual(area.x + area.width);
		}
		const order = await page
			.locator('thead th')
			.evaluateAll((ths) => ths.map((t) => t.getAttribute('data-column')));
		expect(order.slice(0, 3)).toEqual(['identifier', 'state', 'blockers']);
		await shot(page, 'matrix-1440');

		// Scrolled sideways, identifier and state stay at the left edge.
		// The seeded titles make the table wider than the box, so the box does scroll sideways.
		expect(await scroller.evaluate((el) => el.scrollWidth > el.clientWidth)).toBe(true);
		const titleBefore = await box(page, 'tbody td[data-column=title]');
		await scroller.evaluate((el) => (el.scrollLeft = el.scrollWidth));
		const id = await box(page, 'tbody td[data-column=identifier]');
		const st = await box(page, 'tbody td[data-column=state]');
		expect(Math.abs(id.x - area.x)).toBeLessThan(4);
		expect(st.x).toBeGreaterThanOrEqual(id.x + id.width - 1);
		// ...while the other columns did move.
		expect((await box(page, 'tbody td[data-column=title]')).x).toBeLessThan(titleBefore.x - 50);
		await scroller.evaluate((el) => (el.scrollLeft = 0));

		// Choose: hide Title, show Owner. The choice is stored for this viewer and survives a reload.
		await page.click('[data-testid=column-chooser] summary');
		await page.uncheck('input[name=column][value=title]');
		await poll(() => page.textContent('[data-testid=column-chooser]')).toContain('Kept for your next visit.');
		await page.check('input[name=column][value=owner]');
		await poll(async () =>
			(await page.request.get(`${env.baseUrl}/api/v1/projects/${key}/preferences/trace-columns`)).json()
		).toMatchObject({ columns: expect.arrayContaining(['owner']) });
		await page.reload();
		await poll(() => page.locator('[data-testid=matrix-row]').count()).toBe(12);
		expect(await page.locator('th[data-column=title]').count()).toBe(0);
		expect(await page.locator('th[data-column=owner]').count()).toBe(1);
		expect(await page.isChecked('input[name=column][value=owner]')).toBe(true);
		expect(await page.isChecked('input[name=column][value=title]')).toBe(false);

		// Another member's matrix is not changed by this choice.
		const other = await browser.newContext({ viewport: { width: 1440, height: 900 } });
		const otherPage = await other.newPage();
		await signInPage(otherPage, team.users.engineer.email, team.users.engineer.password);
		await otherPage.goto(`${env.baseUrl}/p/${key}/trace`);
		await poll(() => otherPage.locator('[data-testid=matrix-row]').count()).toBe(12);
		expect(await otherPage.locator('th[data-column=title]').count()).toBe(1);
		await other.close();

		// Unknown fields and columns are refused with their names, and nothing changes.
		const bad = await page.request.put(`${env.baseUrl}/api/v1/projects/${key}/preferences/trace-columns`, {
			data: { columns: ['owner'], colour: 'red' }
		});
		expect(bad.status()).toBe(400);
		expect(JSON.stringify(await bad.json())).toContain('colour');
		const badColumn = await page.request.put(
			`${env.baseUrl}/api/v1/projects/${key}/preferences/trace-columns`,
			{
				data: { columns: ['identifier'] }
			}
		);
		expect(badColumn.status()).toBe(400);
		expect((await badColumn.json()).error.fields['columns.0']).toContain('identifier and state always show');
		const kept = await page.request.get(`${env.baseUrl}/api/v1/projects/${key}/preferences/trace-columns`);
		expect((await kept.json()).columns).toContain('owner');

		// Grouped by parent: groups in identifier order; all collapsed, the count still says what is there.
		await page.check('input[name=group]');
		const groupNames = await page.locator('[data-testid=matrix-group]').allTextContents();
		expect(groupNames[0]).toContain('Top level');
		const parents = groupNames.slice(1).map((g) => g.match(/Derived from (\S+)/)![1]);
		expect(parents).toEqual([...parents].sort(compareIdentifiers));
		expect(parents).toEqual(tops.map((t) => t.identifier));
		await page.click('button:has-text("collapse all")');
		await poll(() => page.locator('[data-testid=matrix-row]').count()).toBe(0);
		const count = (await page.textContent('[data-testid=matrix-count]'))!;
		expect(count).not.toMatch(/Showing 0 of/);
		expect(count).toBe('12 requirements of 12 in 4 groups (all collapsed); showing 0 of them.');
		await page.click('[data-testid=matrix-group] button >> nth=1');
		await poll(() => page.locator('[data-testid=matrix-row]').count()).toBe(3);
		expect(await page.textContent('[data-testid=matrix-count]')).toContain('(1 open); showing 3 of them.');

		// The time of the last read is in the 24-hour format, with the UTC instant on hover.
		const updated = page.locator('[data-testid=matrix-status] time');
		expect(await updated.textContent()).toMatch(/^\d{2}:\d{2}:\d{2}$/);
		expect(await updated.getAttribute('title')).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}Z \(UTC\)$/);

		// The methods page, reached from the project, keeps the project's selector and tabs.
		await page.click('header a:has-text("Methods")');
		await page.waitForURL(`**/methods?project=${key}`);
		expect(await page.inputValue('select[aria-label="Switch project"]')).toBe(key);
		expect(await page.locator('nav[aria-label="Project areas"] a').count()).toBeGreaterThan(5);
		await ctx.close();
	}, 120_000);
});

describe('trace graph filters and full labels', () => {
	it('filters by level and state, and shows a node in full on keyboard focus and on hover', async () => {
		const { team } = await seed();
		const key = team.project.key;
		const ctx = await browser.newContext({ viewport: { width: 1440, height: 900 } });
		const page = await ctx.newPage();
		await signInPage(page, team.users.viewer.email, team.users.viewer.password);
		await page.goto(`${env.baseUrl}/p/${key}/graph`);
		const graph = page.locator('[data-testid=trace-graph]');
		await poll(() => graph.getAttribute('data-crossings')).toMatch(/^\d+$/);
		expect(await page.textContent('[data-testid=graph-count]')).toContain('Showing 12 of 12 requirements.');
		await shot(page, 'graph-1440');

		// Level filter: the three system requirements (and no model: none of them uses one).
		await page.selectOption('select[name=level]', 'system');
		await poll(() => page.textContent('[data-testid=graph-count]')).toContain('Showing 3 of 12');
		await page.click('summary:has-text("The same graph as a list")');
		expect(await page.locator('[data-testid=graph-list] li').count()).toBe(3);
		// State filter on top: nothing of these is verified.
		await page.selectOption('select[name=state]', 'verified');
		await poll(() => page.textContent('[data-testid=graph-count]')).toContain('Showing 0 of 12');
		await page.selectOption('select[name=level]', '');
		await page.selectOption('select[name=state]', 'not-covered');
		const notCovered = Number(await page.textContent('[data-testid=legend-not-covered]'));
		expect(notCovered).toBeGreaterThan(0);
		await poll(() => page.textContent('[data-testid=graph-count]')).toContain(`Showing ${notCovered} of 12`);
		await page.selectOption('select[name=state]', '');
		await poll(() => page.textContent('[data-testid=graph-count]')).toContain('Showing 12 of 12');

		// Keyboard: Tab to the drawing, arrows through the nodes until the model, whose name is whole.
		await graph.focus();
		let text = '';
		for (let i = 0; i < 20 && !text.includes(MODEL_NAME); i++) {
			await page.keyboard.press('ArrowDown');
			text = (await page.textContent('[data-testid=graph-tip]')) ?? '';
		}
		expect(text).toContain(`Model ${MODEL_NAME}`);

		// Hover: the same full text where the node is drawn (just below the tip).
		const tip = await box(page, '[data-testid=graph-tip]');
		await page.keyboard.press('Escape');
		expect(await page.locator('[data-testid=graph-tip]').count()).toBe(0);
		await page.mouse.move(tip.x + tip.width / 2, tip.y + tip.height + 6 + 10);
		await poll(() => page.textContent('[data-testid=graph-tip]')).toContain(`Model ${MODEL_NAME}`);
		await ctx.close();
	}, 120_000);
});
