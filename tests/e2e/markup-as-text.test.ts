import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTestDb, createTeam } from '../factories';
import { launchBrowser } from '../helpers/browser';
import { env } from '../helpers/env';
import { signedIn } from '../helpers/http';

// Requirement text is shown as text: markup typed into a title, statement or rationale never runs.
let browser: Browser;
beforeAll(async () => {
	browser = await launchBrowser();
});
afterAll(async () => {
	await browser?.close();
	await closeTestDb();
});

const HOSTILE = {
	title: '<script>window.__pwned = "title"</script>Hostile title',
	statement:
		'The loop shall remain stable <img src=x onerror="window.__pwned=\'statement\'"> for every gain in the sector [0, 2].',
	rationale: '<svg onload="window.__pwned=\'rationale\'"></svg><a href="javascript:window.__pwned=1">x</a>'
};

describe('markup in requirement text', () => {
	it('is rendered as text on the requirement list and page, and no script runs', async () => {
		const team = await createTeam();
		const engineer = await signedIn(team.users.engineer.email, team.users.engineer.password);
		const res = await engineer.json(`/api/v1/projects/${team.project.key}/requirements`, 'POST', {
			...HOSTILE,
			level: 'loop',
			assuranceLevel: 'C',
			methods: ['analysis']
		});
		expect(res.status).toBe(201);
		const { requirement } = await res.json();

		const ctx = await browser.newContext();
		const page = await ctx.newPage();
		const dialogs: string[] = [];
		page.on('dialog', async (d) => {
			dialogs.push(d.message());
			await d.dismiss();
		});
		await page.goto(`${env.baseUrl}/signin`);
		await page.fill('#email', team.users.viewer.email);
		await page.fill('#password', team.users.viewer.password);
		await Promise.all([
			page.waitForURL((u) => !u.pathname.startsWith('/signin')),
			page.click('button:has-text("Sign in")')
		]);

		for (const path of [
			`/p/${team.project.key}/requirements`,
			`/p/${team.project.key}/requirements/${requirement.id}`
		]) {
			await page.goto(env.baseUrl + path);
			await page.waitForLoadState('networkidle');
			expect(await page.evaluate(() => (window as unknown as { __pwned?: string }).__pwned)).toBeUndefined();
			const text = await page.textContent('main');
			expect(text).toContain('<script>window.__pwned = "title"</script>Hostile title');
			// No element was made from the typed markup.
			expect(
				await page.locator('main img[src="x"], main svg[onload], main a[href^="javascript:"]').count()
			).toBe(0);
		}
		expect(dialogs).toEqual([]);
		await ctx.close();
	}, 60_000);
});
