import { createHash } from 'node:crypto';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addMember, closeTestDb, createProject, createUser, unique } from '../factories';
import { launchBrowser } from '../helpers/browser';
import { env } from '../helpers/env';
import { createRequirement } from '../integration/evidence/fixtures';

// The upload form in Chromium, with JavaScript (XMLHttpRequest to the API, progress bar) and without
// (multipart post to the page's form action). The SHA-256 shown must be the one computed here.
let browser: Browser;
beforeAll(async () => {
	browser = await launchBrowser();
});
afterAll(async () => {
	await browser?.close();
	await closeTestDb();
});

describe.each([true, false])('evidence upload in the browser (JavaScript %s)', (javaScriptEnabled) => {
	it('uploads a file and shows its record with the SHA-256 of the bytes sent', async () => {
		const u = await createUser({ name: 'Test Engineer' });
		const p = await createProject();
		await addMember(u.id, p.id, 'engineer');
		const req = await createRequirement(p.id);
		// 3 MiB of text, so the progress bar has something to show with JavaScript on.
		const line = Buffer.from('t,angle,rate\n');
		const bytes = Buffer.alloc(3 * 1024 * 1024);
		for (let i = 0; i < bytes.length; i += line.length)
			line.copy(bytes, i, 0, Math.min(line.length, bytes.length - i));
		const expected = createHash('sha256').update(bytes).digest('hex');

		const ctx = await browser.newContext({ javaScriptEnabled });
		const page = await ctx.newPage();
		await page.goto(`${env.baseUrl}/signin?redirectTo=${encodeURIComponent(`/p/${p.key}/evidence`)}`);
		await page.fill('#email', u.email);
		await page.fill('#password', u.password);
		await page.click('button:has-text("Sign in")');
		await page.waitForURL(`**/p/${p.key}/evidence`);

		const posts: string[] = [];
		page.on('request', (r) => {
			if (r.method() === 'POST') posts.push(new URL(r.url()).pathname + new URL(r.url()).search);
		});
		const title = unique('browser upload ');
		const form = page.locator('#upload form');
		await form.locator('input[name=title]').fill(title);
		await form.locator('select[name=kind]').selectOption('log');
		await form.locator('input[name=requirementIds]').fill(req.identifier);
		await form
			.locator('input[name=file]')
			.setInputFiles({ name: 'rig-run 4.csv', mimeType: 'text/csv', buffer: bytes });
		await form.locator('button:has-text("Upload the evidence")').click();
		if (javaScriptEnabled) await page.waitForSelector('progress', { timeout: 10_000 }).catch(() => {});
		await page.waitForURL(/\/evidence\/\d+$/, { timeout: 30_000 });
		expect(await page.textContent('h1')).toContain(title);
		expect((await page.textContent('[data-testid=sha256]'))?.trim()).toBe(expected);
		expect(await page.textContent('main')).toContain('rig-run 4.csv');
		// With JavaScript the file went to the API (progress events); without, to the form action.
		expect(posts).toContain(
			javaScriptEnabled ? `/api/v1/projects/${p.key}/evidence` : `/p/${p.key}/evidence?/upload`
		);
		await ctx.close();
	}, 90_000);
});
