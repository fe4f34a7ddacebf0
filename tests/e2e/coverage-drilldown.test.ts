import { describe, expect, it } from 'vitest';
import { signInPage, useBrowser } from '../helpers/browser';
import { env } from '../helpers/env';
import { buildScenario } from '../integration/trace/scenario';

// Issue 13, in Chromium: a coverage count's link opens the trace matrix showing exactly that many rows
// (the API side of every count is tests/integration/trace/coverage-drilldown.test.ts).

const browser = useBrowser();

describe('coverage drill-down in the browser', () => {
	it('"Evidence awaiting review", "Rejected evidence" and a state card open matrices of their counts', async () => {
		const s = await buildScenario();
		const ctx = await browser().newContext();
		const page = await ctx.newPage();
		try {
			await signInPage(page, s.team.users.viewer.email, s.team.users.viewer.password);
			const coverage = `${env.baseUrl}/p/${s.team.project.key}/coverage`;
			const checks: {
				what: string;
				link: () => ReturnType<typeof page.locator>;
				count: () => Promise<number>;
			}[] = [
				...['open-review', 'rejected-evidence'].map((kind) => ({
					what: kind,
					link: () => page.locator(`[data-blocker=${kind}] a`).first(),
					count: async () => Number(await page.locator(`[data-blocker=${kind}] td`).last().innerText())
				})),
				{
					what: 'state blocked',
					link: () => page.locator('[data-testid=count-blocked] a'),
					count: async () => Number(await page.locator('[data-testid=count-blocked] p.text-2xl').innerText())
				}
			];
			for (const c of checks) {
				await page.goto(coverage);
				const n = await c.count();
				expect(n, c.what).toBeGreaterThan(0);
				await c.link().click();
				await page.waitForURL(/\/trace\?/);
				await expect
					.poll(() => page.locator('[data-testid=matrix-row]').count(), { timeout: 15_000 })
					.toBe(n);
				expect(await page.locator('[data-testid=count-filter]').innerText()).toMatch(
					/Only the rows of one coverage count/
				);
				expect(await page.locator('[data-testid=matrix-status]').innerText()).toContain(
					`Showing ${n} of ${n}`
				);
			}
		} finally {
			await ctx.close();
		}
	});
});
