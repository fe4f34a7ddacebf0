import { chromium, type Browser } from 'playwright-core';

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
