import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
	addMember,
	closeTestDb,
	createModel,
	createModelVersion,
	createProject,
	createUser,
	lagModel,
	testDb,
	unique
} from '../factories';
import { launchBrowser, signInPage } from '../helpers/browser';
import { env } from '../helpers/env';
import { createRequirement } from '../integration/evidence/fixtures';

// Forms keep what the person typed: a refused upload shows every text field again, and a saved
// specification shows the saved values, with JavaScript on (XMLHttpRequest / use:enhance) and off
// (the form action's fail(4xx, { values, errors }) re-renders the page).
let browser: Browser;
beforeAll(async () => {
	browser = await launchBrowser();
});
afterAll(async () => {
	await browser?.close();
	await closeTestDb();
});

const value = (page: Page, selector: string) => page.locator(selector).inputValue();

describe.each([true, false])('forms keep values (JavaScript %s)', (javaScriptEnabled) => {
	it('a refused evidence upload (bad CSV) keeps every text field and lists every problem', async () => {
		const u = await createUser({ name: 'Upload Engineer' });
		const p = await createProject();
		await addMember(u.id, p.id, 'engineer');
		const req = await createRequirement(p.id);
		const ctx = await browser.newContext({ javaScriptEnabled });
		const page = await ctx.newPage();
		await signInPage(page, u.email, u.password);
		await page.goto(`${env.baseUrl}/p/${p.key}/evidence`);

		const form = page.locator('#upload form');
		const title = unique('refused upload ');
		await form.locator('input[name=title]').fill(title);
		await form.locator('select[name=kind]').selectOption('frequency-response');
		await form.locator('input[name=requirementIds]').fill(req.identifier);
		await form.locator('input[name=testArticle]').fill('rig 2, actuator S/N 0042');
		await form.locator('input[name=testDate]').fill('2026-11-30');
		await form.locator('textarea[name=note]').fill('second sweep');
		// No unit in the header, a row with a word for a number, a row with too few columns.
		const csv = 'f,mag,phase\n1,0.5,-10\n2,abc,-20\n3,0.4\n';
		await form
			.locator('input[name=file]')
			.setInputFiles({ name: 'sweep.csv', mimeType: 'text/csv', buffer: Buffer.from(csv) });
		await form.locator('button:has-text("Upload the evidence")').click();
		await page.waitForSelector('#upload [role=alert]');
		await page.waitForLoadState('networkidle');

		expect(await value(page, '#upload input[name=title]')).toBe(title);
		expect(await value(page, '#upload select[name=kind]')).toBe('frequency-response');
		expect(await value(page, '#upload input[name=requirementIds]')).toBe(req.identifier);
		expect(await value(page, '#upload input[name=testArticle]')).toBe('rig 2, actuator S/N 0042');
		expect(await value(page, '#upload input[name=testDate]')).toBe('2026-11-30');
		expect(await value(page, '#upload textarea[name=note]')).toBe('second sweep');
		const text = (await page.textContent('#upload')) ?? '';
		expect(text).toContain('frequency');
		// Each problem is listed, not only the first one found.
		expect(text).toMatch(/row 3/i);
		expect(text).toMatch(/row 4/i);
		expect(await testDb()('evidence_files').where({ title }).count({ n: '*' })).toEqual([{ n: '0' }]);
		await ctx.close();
	}, 60_000);

	it('after a successful specification save the form shows the saved values', async () => {
		const u = await createUser({ name: 'Spec Engineer' });
		const p = await createProject();
		await addMember(u.id, p.id, 'engineer');
		const req = await createRequirement(p.id);
		const model = await createModel(p.id, { name: 'pitch actuator' });
		await createModelVersion(model.id, lagModel(1, 0.05));
		const ctx = await browser.newContext({ javaScriptEnabled });
		const page = await ctx.newPage();
		await signInPage(page, u.email, u.password);
		await page.goto(`${env.baseUrl}/p/${p.key}/requirements/${req.id}`);

		await page.selectOption('#checkType', 'circle');
		await page.fill('#k1', '0');
		await page.fill('#k2', '2.5');
		await page.fill('#requiredMarginPercent', '10');
		await page.click('button:has-text("Save the specification")');
		await page.waitForSelector('[data-testid=spec-summary]');
		await page.waitForLoadState('networkidle');
		expect(await page.textContent('[data-testid=spec-summary]')).toContain('sector [0, 2.5]');
		expect(await value(page, '#k1')).toBe('0');
		expect(await value(page, '#k2')).toBe('2.5');
		expect(await value(page, '#requiredMarginPercent')).toBe('10');
		expect(await value(page, '#checkType')).toBe('circle');
		await ctx.close();
	}, 60_000);
});
