import { createHash } from 'node:crypto';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addMember, closeTestDb, createProject, createUser, testDb } from '../factories';
import { launchBrowser } from '../helpers/browser';
import { env } from '../helpers/env';

// An engineer writes a requirement through the form, with JavaScript on (hints follow the typing)
// and off (hints come from the server, via "Check the wording" and on the requirement page).

let browser: Browser;
beforeAll(async () => {
	browser = await launchBrowser();
});
afterAll(async () => {
	await browser?.close();
	await closeTestDb();
});

const VAGUE = 'The yaw damper should provide adequate damping for TBD gains.';
const GOOD =
	'The yaw damper loop shall remain absolutely stable for every actuator gain in [0.5, 1.8] times nominal.';

describe.each([true, false])('new requirement in the browser (JavaScript %s)', (javaScriptEnabled) => {
	it('shows quality hints, then creates the requirement with the next identifier', async () => {
		const u = await createUser({ name: 'Form Engineer' });
		const p = await createProject();
		await addMember(u.id, p.id, 'engineer');
		const ctx = await browser.newContext({ javaScriptEnabled });
		const page = await ctx.newPage();
		await page.goto(`${env.baseUrl}/signin`);
		await page.fill('#email', u.email);
		await page.fill('#password', u.password);
		await page.click('button:has-text("Sign in")');
		await page.waitForURL((url) => !url.pathname.startsWith('/signin'));

		await page.goto(`${env.baseUrl}/p/${p.key}/requirements`);
		expect(await page.textContent('[data-testid=empty-requirements]')).toContain('No requirement yet');
		await page.click('a:has-text("Write the first requirement")');
		await page.waitForURL(`**/p/${p.key}/requirements/new`);

		await page.fill('#title', 'Yaw damper stability');
		await page.fill('#statement', VAGUE);
		if (javaScriptEnabled) {
			// Live: computed in the browser while typing, nothing sent yet.
			await page.waitForSelector('[data-testid=quality-hint-list] [data-rule=vague]');
		} else {
			await page.click('button:has-text("Check the wording")');
			await page.waitForSelector('[data-testid=quality-hint-list]');
			expect(await page.inputValue('#title')).toBe('Yaw damper stability');
		}
		const rulesShown = await page.$$eval('[data-testid=quality-hint-list] li', (lis) =>
			lis.map((li) => li.getAttribute('data-rule'))
		);
		expect(rulesShown).toEqual(
			expect.arrayContaining(['shall-not-will', 'vague', 'placeholder', 'one-shall'])
		);
		expect(await page.textContent('[data-testid=quality-hints]')).toContain('blocks approval');
		expect(await testDb()('requirements').where({ project_id: p.id })).toHaveLength(0);

		// A fixed statement: the hints go away (live with JavaScript).
		await page.fill('#statement', GOOD);
		if (javaScriptEnabled) {
			await page.waitForFunction(() => document.querySelector('[data-testid=quality-hint-list]') === null);
			expect(await page.textContent('[data-testid=quality-hints]')).toContain('no hint');
		}
		await page.selectOption('#level', 'loop');
		await page.selectOption('#assuranceLevel', 'B');
		await page.check('input[name=methods][value=test]');
		await page.click('button:has-text("Create the requirement")');
		await page.waitForURL(/\/requirements\/\d+$/);
		expect(await page.textContent('h1')).toContain(`${p.key}-001`);
		expect(await page.textContent('[data-testid=statement]')).toBe(GOOD);
		const row = await testDb()('requirements as r')
			.join('requirement_revisions as v', 'v.requirement_id', 'r.id')
			.where('r.project_id', p.id)
			.first('r.identifier', 'v.methods', 'v.owner_id', 'v.level');
		expect(row).toEqual({
			identifier: `${p.key}-001`,
			methods: ['analysis', 'test'],
			owner_id: u.id,
			level: 'loop'
		});

		// The specification from a template: with JavaScript the link fills the form in place; without,
		// it reloads the page with the template's values. The statement says [0.5, 1.8]: the -50 %/+80 %
		// template agrees with it, the ±6 dB one does not.
		const content = {
			operatingPoints: [{ label: 'hover', model: { kind: 'tf', num: [1], den: [0.05, 1] } }]
		};
		const [m] = await testDb()('models')
			.insert({ project_id: p.id, name: 'yaw vane actuator', latest_version: 1 })
			.returning('id');
		await testDb()('model_versions').insert({
			model_id: m.id,
			version: 1,
			content: JSON.stringify(content),
			content_hash: createHash('sha256').update(JSON.stringify(content)).digest('hex')
		});
		await page.reload();
		const useTemplate = async (id: string) => {
			if (!(await page.isVisible(`a[data-template=${id}]`)))
				await page.click('summary:has-text("Start from a template")');
			await page.click(`a[data-template=${id}]`);
		};
		const k2Is = (v: string) =>
			page.waitForFunction(
				(want) => (document.querySelector('#k2') as HTMLInputElement | null)?.value === want,
				v
			);
		await useTemplate('gain-6db');
		await k2Is('1.996');
		if (javaScriptEnabled) {
			expect(await page.textContent('[data-testid=live-consistency]')).toContain('[0.501, 1.996]');
		}
		await useTemplate('gain-50-80');
		await k2Is('1.8');
		expect(await page.inputValue('#k1')).toBe('0.5');
		await page.click('button:has-text("Save the specification")');
		await page.waitForSelector('[data-testid=spec-summary]');
		expect(await page.textContent('[data-testid=spec-summary]')).toContain('sector [0.5, 1.8]');
		expect(await page.getAttribute('[data-testid=consistency]', 'data-status')).toBe('consistent');
		const spec = await testDb()('stability_specs as s')
			.join('requirements as r', 'r.id', 's.requirement_id')
			.where('r.project_id', p.id)
			.first('s.version', 's.template', 's.check');
		expect(spec).toEqual({
			version: 1,
			template: 'gain-50-80',
			check: { type: 'circle', sector: [0.5, 1.8] }
		});
		await ctx.close();
	}, 60_000);
});
