import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTestDb, createModel, createTeam, testDb } from '../factories';
import { launchBrowser, signInPage as signIn } from '../helpers/browser';
import { env } from '../helpers/env';

// An analyst types a model the way it is written on paper (a transfer-function expression), sees how it
// was read, and publishes; the version's hash equals that of the same model entered as JSON. Screenshots
// of every entry form go to /tmp/shots-modelentry/ (looked at by hand; the assertions do the checking).

const SHOTS = '/tmp/shots-modelentry';
let browser: Browser;
beforeAll(async () => {
	browser = await launchBrowser();
	mkdirSync(SHOTS, { recursive: true });
});
afterAll(async () => {
	await browser?.close();
	await closeTestDb();
});

const shot = (page: Page, name: string) =>
	page.screenshot({ path: join(SHOTS, `${name}.png`), fullPage: true });

describe('model entry as a person writes it', () => {
	it('publishes a typed expression with the same hash as the equal tf typed as JSON', async () => {
		const team = await createTeam();
		const typed = await createModel(team.project.id, { ownerId: team.users.analyst.id, name: 'typed loop' });
		const asJson = await createModel(team.project.id, { ownerId: team.users.analyst.id, name: 'json loop' });
		const ctx = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
		const page = await ctx.newPage();
		try {
			await signIn(page, team.users.analyst.email, team.users.analyst.password);
			await page.goto(`${env.baseUrl}/p/${team.project.key}/models/${typed.id}/publish`);
			await page.fill('#p0-label', 'hover, 20 C');
			// A mistake first: the problem is named live, by point, field and column, and on submit in place.
			await page.fill('#p0-expression', '66/((s+1.1)(s+3.5)(s+k))');
			await expect
				.poll(() => page.textContent('[data-testid=entry-live-issue]'))
				.toContain('Operating point 1 (hover, 20 C), transfer function, column 22: unknown symbol "k"');
			await page.click('button:has-text("Publish version 1")');
			await expect
				.poll(() => page.textContent('#p0-expression-error'), { timeout: 10_000 })
				.toContain('Column 22: unknown symbol "k"');
			expect(page.url()).toContain('/publish');
			await shot(page, 'expression-refused');

			await page.fill('#p0-expression', '66/((s+1.1)(s+3.5)(s+9))');
			await expect
				.poll(() => page.textContent('[data-testid=entry-readback]'))
				.toContain('(66) / (s^3 + 13.6 s^2 + 45.25 s + 34.65)');
			const poles = page.locator('[data-testid=preview-poles] li');
			await expect.poll(async () => (await poles.allTextContents()).sort()).toEqual(['-1.1', '-3.5', '-9']);
			await shot(page, 'expression');
			await page.click('button:has-text("Publish version 1")');
			await page.waitForURL(`**/models/${typed.id}/v/1`);
			const typedHash = (await page.textContent('[data-testid=version-hash]'))?.trim();
			expect(typedHash).toMatch(/^[0-9a-f]{64}$/);

			// The same model as JSON, coefficients from expanding the expression (sympy: 68/5, 181/4, 693/20).
			await page.goto(`${env.baseUrl}/p/${team.project.key}/models/${asJson.id}/publish`);
			await page.check('input[name=mode][value=json]');
			await page.fill(
				'#operatingPoints',
				JSON.stringify([
					{ label: 'hover, 20 C', model: { kind: 'tf', num: [66], den: [1, 13.6, 45.25, 34.65] } }
				])
			);
			await shot(page, 'json-advanced');
			await page.click('button:has-text("Publish version 1")');
			await page.waitForURL(`**/models/${asJson.id}/v/1`);
			expect((await page.textContent('[data-testid=version-hash]'))?.trim()).toBe(typedHash);
		} finally {
			await ctx.close();
		}
	}, 90_000);

	it('publishes a typed expression with JavaScript off (the server reads the same fields)', async () => {
		const team = await createTeam();
		const model = await createModel(team.project.id, {
			ownerId: team.users.analyst.id,
			name: 'no-script loop'
		});
		const ctx = await browser.newContext({ javaScriptEnabled: false });
		const page = await ctx.newPage();
		try {
			await signIn(page, team.users.analyst.email, team.users.analyst.password);
			await page.goto(`${env.baseUrl}/p/${team.project.key}/models/${model.id}/publish`);
			// The page opens point by point with the example point, its transfer function as an expression.
			expect(await page.inputValue('#p0-expression')).toBe('1/(s + 1)');
			await page.fill('#p0-expression', '(s+2)/(s^2+0.4s+4) * sin(s)');
			await page.click('button:has-text("Publish version 1")');
			await page.waitForSelector('#p0-expression-error');
			expect(await page.textContent('#p0-expression-error')).toContain(
				'Column 22: sin(...) is not a polynomial term'
			);
			await page.fill('#p0-expression', '(s+2)/(s^2+0.4s+4)');
			await page.click('button:has-text("Publish version 1")');
			await page.waitForURL(`**/models/${model.id}/v/1`);
		} finally {
			await ctx.close();
		}
		const [v] = await testDb()('model_versions').where({ model_id: model.id });
		expect(v.content.operatingPoints).toEqual([
			{ label: 'nominal', model: { kind: 'tf', num: [1, 2], den: [1, 0.4, 4] } }
		]);
	}, 60_000);

	it('takes zeros/poles/gain, state space and a CSV file, and refuses a lone complex pole and a wrong shape', async () => {
		const team = await createTeam();
		const model = await createModel(team.project.id, { ownerId: team.users.analyst.id, name: 'forms loop' });
		const ctx = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
		const page = await ctx.newPage();
		try {
			await signIn(page, team.users.analyst.email, team.users.analyst.password);
			await page.goto(`${env.baseUrl}/p/${team.project.key}/models/${model.id}/publish`);
			await page.fill('#p0-label', 'cruise');
			await page.selectOption('#p0-form', 'zpk');
			await page.fill('#p0-poles', '-1\n-0.2 + 3.1j');
			await page.fill('#p0-gain', '5');
			await expect
				.poll(() => page.textContent('[data-testid=entry-live-issue]'))
				.toContain('Operating point 1 (cruise), poles, row 2, column 1: "-0.2 + 3.1j" has no conjugate');
			await page.fill('#p0-poles', '-1\n-0.2 ± 3.1j');
			const poles = page.locator('[data-testid=preview-poles] li');
			await expect.poll(() => poles.allTextContents()).toEqual(['-1', '-0.2 + 3.1j', '-0.2 − 3.1j']);
			await shot(page, 'zpk');

			await page.click('button:has-text("Add an operating point")');
			await page.fill('#p1-label', 'cold');
			await page.selectOption('#p1-form', 'ss');
			await page.fill('#p1-A', '[0 1; -4 -0.4]');
			await page.fill('#p1-B', '0 1');
			await page.fill('#p1-C', '4 0');
			await expect
				.poll(() => page.textContent('[data-testid=entry-live-issue]'))
				.toContain('Operating point 2 (cold), matrix B, row 1, column 2');
			await page.fill('#p1-B', '0\n1');
			await expect.poll(() => page.locator('[data-testid=entry-readback]').count()).toBe(2);
			await shot(page, 'state-space');
			await page.click('button:has-text("Publish version 1")');
			await page.waitForURL(`**/models/${model.id}/v/1`);

			// Many points at once from our CSV layout: the rows become the points on the page.
			const csv = join(SHOTS, 'points.csv');
			writeFileSync(
				csv,
				[
					'label,expression,zeros,poles,gain,A,B,C,D',
					'"hover, 20 C",66/((s+1.1)(s+3.5)(s+9)),,,,,,,',
					'cruise,,,-1 ± 2j,5,,,,',
					'cold,,,,,0 1; -4 -0.4,0; 1,4 0,'
				].join('\n')
			);
			await page.goto(`${env.baseUrl}/p/${team.project.key}/models/${model.id}/publish`);
			await page.setInputFiles('#file', csv);
			await expect.poll(() => page.locator('[data-testid=entry-point]').count()).toBe(3);
			await expect.poll(() => page.locator('[data-testid=entry-readback]').count()).toBe(3);
			await shot(page, 'csv-loaded');
			await page.click('button:has-text("Publish version 2")');
			await page.waitForURL(`**/models/${model.id}/v/2`);
		} finally {
			await ctx.close();
		}
	}, 90_000);
});
