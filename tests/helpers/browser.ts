import { chromium, type Browser, type Page } from 'playwright-core';
import { afterAll, beforeAll } from 'vitest';
import { closeTestDb } from '../factories';
import { env } from './env';

// Debian's chromium, headless, with the network-quiet flags this machine needs.
export async function launchBrowser(): Promise<Browser> {
	return chromium.launch({
		executablePath: '/usr/bin/chromium',
		headless: true,
		args: [
			'--headless',
			'--no-sandbox',
			'--disable-gpu',
			'--disable-dev-shm-usage',
			'--disable-quic',
			'--no-first-run',
			'--disable-background-networking',
			'--disable-component-update',
			'--disable-sync'
		]
	});
}

/** Sign in through the form and wait until the app has left the sign-in page. */
export async function signInPage(page: Page, email: string, password: string): Promise<void> {
	await page.goto(`${env.baseUrl}/signin`);
	await page.fill('#email', email);
	await page.fill('#password', password);
	await page.click('button:has-text("Sign in")');
	await page.waitForURL((u) => !u.pathname.startsWith('/signin'));
}

/**
 * The start-up every browser test file shares: one Chromium for the file, closed after its tests with
 * the test database connection (`after` runs first, e.g. to release a held harness worker).
 * Returns a getter: the browser exists once beforeAll has run.
 */
export function useBrowser(o: { after?: () => void | Promise<void> } = {}): () => Browser {
	let browser: Browser | undefined;
	beforeAll(async () => {
		browser = await launchBrowser();
	});
	afterAll(async () => {
		await o.after?.();
		await browser?.close();
		await closeTestDb();
	});
	return () => {
		if (!browser) throw new Error('the browser is started in beforeAll');
		return browser;
	};
}
