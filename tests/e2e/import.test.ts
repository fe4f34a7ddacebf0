import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addMember, closeTestDb, createProject, createUser, testDb } from '../factories';
import { launchBrowser, signInPage } from '../helpers/browser';
import { env } from '../helpers/env';

// Issue 14: an engineer imports a 200-row spreadsheet with two bad rows (no level), sees the two
// problems by row and column, fixes the mapping (a level for rows that give none), confirms, and sees
// the requirements. With JavaScript on and off: the pages are plain forms.

let browser: Browser;
beforeAll(async () => {
	browser = await launchBrowser();
});
afterAll(async () => {
	await browser?.close();
	await closeTestDb();
});

function sheet(): string {
	const rows = ['Title,Statement,Level,DAL,Method'];
	for (let i = 1; i <= 200; i++) {
		const level = i === 57 || i === 143 ? '' : i % 3 === 0 ? 'subsystem' : 'loop';
		rows.push(
			`Loop ${i} stability,The loop ${i} shall remain absolutely stable in [0.5; 1.8].,${level},B,analysis`
		);
	}
	return rows.join('\n');
}

describe.each([true, false])('spreadsheet import in the browser (JavaScript %s)', (javaScriptEnabled) => {
	it('two bad rows are named; a fixed mapping clears them; confirming makes the 200 requirements', async () => {
		const u = await createUser({ name: 'Import Engineer' });
		const p = await createProject();
		await addMember(u.id, p.id, 'engineer');
		const ctx = await browser.newContext({ javaScriptEnabled });
		const page = await ctx.newPage();
		await signInPage(page, u.email, u.password);

		await page.goto(`${env.baseUrl}/p/${p.key}/imports`);
		await page.setInputFiles('input[name=file]', {
			name: 'supplier.csv',
			mimeType: 'text/csv',
			buffer: Buffer.from(sheet())
		});
		await page.click('button:has-text("Upload and preview")');
		await page.waitForURL(/\/imports\/\d+$/);
		// The import never approves: the page says so before anything is confirmed.
		expect(await page.textContent('[data-testid=status-rule]')).toContain('not applied');
		// The two rows with a problem are not counted as new until they can be read.
		expect(await page.textContent('[data-testid=count-new]')).toBe('198');
		expect(await page.textContent('[data-testid=count-problems]')).toBe('2');
		const problems = await page.$$eval('[data-testid=problems] tbody tr', (trs) =>
			trs.map((tr) => tr.textContent ?? '')
		);
		expect(problems).toHaveLength(2);
		expect(problems[0]).toContain('row 58, column C (Level)');
		expect(problems[1]).toContain('row 144, column C (Level)');
		expect(problems[0]).toContain('Level is missing');
		expect(await page.isDisabled('button:has-text("Confirm")')).toBe(true);
		expect(await testDb()('requirements').where({ project_id: p.id })).toHaveLength(0);

		await page.selectOption('select[name="def.level"]', 'loop');
		await page.click('button:has-text("Preview again with this mapping")');
		await page.waitForSelector('[data-testid=count-problems]:text-is("0")');
		expect(await page.textContent('[data-testid=count-new]')).toBe('200');

		await page.click('button:has-text("Confirm")');
		await page.waitForSelector('[data-testid=import-status]:has-text("applied")');
		await page.click('a:has-text("See the requirements")');
		await page.waitForURL(`**/p/${p.key}/requirements`);
		expect(await page.textContent('main')).toContain('Loop 200 stability');
		const rows = await testDb()('requirements as r')
			.join('requirement_revisions as v', function () {
				this.on('v.requirement_id', 'r.id').andOn('v.revision', 'r.current_revision');
			})
			.where('r.project_id', p.id)
			.orderBy('r.number')
			.select('r.identifier', 'v.title', 'v.level', 'r.review_state');
		expect(rows).toHaveLength(200);
		expect(rows[0]).toEqual({
			identifier: `${p.key}-001`,
			title: 'Loop 1 stability',
			level: 'loop',
			review_state: 'draft'
		});
		expect(rows.every((r) => r.review_state === 'draft')).toBe(true);
		expect(rows[56]).toMatchObject({ title: 'Loop 57 stability', level: 'loop' });
		expect(rows[2]).toMatchObject({ level: 'subsystem' });
		await ctx.close();
	}, 120_000);
});
