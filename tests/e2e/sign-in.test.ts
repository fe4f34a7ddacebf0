import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addMember, closeTestDb, createProject, createUser } from '../factories';
import { launchBrowser } from '../helpers/browser';
import { env } from '../helpers/env';

let browser: Browser;
beforeAll(async () => {
	browser = await launchBrowser();
});
afterAll(async () => {
	await browser?.close();
	await closeTestDb();
});

describe.each([true, false])('sign-in in the browser (JavaScript %s)', (javaScriptEnabled) => {
	it('shows an error for a wrong password, then signs in and lands on the requested project', async () => {
		const u = await createUser({ name: 'Browser Person' });
		const p = await createProject();
		await addMember(u.id, p.id, 'engineer');
		const ctx = await browser.newContext({ javaScriptEnabled });
		const page = await ctx.newPage();
		await page.goto(`${env.baseUrl}/p/${p.key}`);
		expect(new URL(page.url()).pathname).toBe('/signin');
		await page.fill('#email', u.email);
		await page.fill('#password', 'not-the-password');
		await page.click('button:has-text("Sign in")');
		await page.waitForSelector('[role=alert]');
		expect(await page.textContent('[role=alert]')).toContain('do not match');
		await page.fill('#password', u.password);
		await page.click('button:has-text("Sign in")');
		await page.waitForURL(`**/p/${p.key}`);
		expect(await page.textContent('h1')).toContain(p.name);
		expect(await page.textContent('header')).toContain('Browser Person');
		await ctx.close();
	}, 60_000);
});
