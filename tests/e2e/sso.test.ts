import { mkdirSync } from 'node:fs';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { FAKE_OIDC_PASSWORD, FAKE_OIDC_USERS } from '../../fakes/oidc-users';
import { closeTestDb, createProject, createUser, testDb } from '../factories';
import { launchBrowser, signInPage } from '../helpers/browser';
import { env } from '../helpers/env';
import { issuer } from '../helpers/oidc';

// In Chromium, through the identity-provider stand-in with real redirects: the administrator maps a
// group to a role, a person signs in with single sign-on and gets that role in the project, then
// confirms who they are with a fresh login at the provider (prompt=login, max_age=0) whose auth_time
// the app accepts. Screenshots go to SHOTS_DIR (default /tmp/shots-oidc).

const SHOTS = process.env.SHOTS_DIR ?? '/tmp/shots-oidc';
const rhea = FAKE_OIDC_USERS.find((u) => u.email.startsWith('rhea.ostrander'))!;

let browser: Browser;
beforeAll(async () => {
	mkdirSync(SHOTS, { recursive: true });
	browser = await launchBrowser();
});
afterAll(async () => {
	await browser?.close();
	await closeTestDb();
});

describe.each([true, false])('single sign-on in the browser (JavaScript %s)', (javaScriptEnabled) => {
	it('maps a group, signs in through the provider with the mapped role, and logs in afresh', async () => {
		const shot = (name: string) => `${SHOTS}/${name}${javaScriptEnabled ? '' : '-nojs'}.png`;
		const p = await createProject({ name: 'Single sign-on flight loop' });
		const admin = await createUser({ name: 'Site Admin', admin: true });

		// The administrator maps the provider's group to engineer in the project.
		const adminCtx = await browser.newContext({ javaScriptEnabled });
		const adminPage = await adminCtx.newPage();
		await signInPage(adminPage, admin.email, admin.password);
		await adminPage.goto(`${env.baseUrl}/admin/projects/${p.key}`);
		await adminPage.click('a:has-text("Roles from identity-provider groups")');
		await adminPage.waitForURL(`**/admin/projects/${p.key}/groups`);
		await adminPage.fill('#group', 'vx7-engineering');
		await adminPage.selectOption('#role', 'engineer');
		await adminPage.click('button:has-text("Map the group")');
		await adminPage.waitForSelector('text=The group vx7-engineering is mapped.');
		await adminPage.waitForSelector('td:has-text("vx7-engineering")');
		await adminPage.screenshot({ path: shot('admin-group-mapping'), fullPage: true });
		await adminCtx.close();

		// Rhea opens the project, is sent to sign in, and chooses single sign-on.
		const ctx = await browser.newContext({ javaScriptEnabled });
		const page = await ctx.newPage();
		await page.goto(`${env.baseUrl}/p/${p.key}/requirements`);
		expect(new URL(page.url()).pathname).toBe('/signin');
		await page.waitForSelector('button:has-text("Continue with Demo identity provider")');
		await page.screenshot({ path: shot('signin-with-sso'), fullPage: true });
		await page.click('button:has-text("Continue with Demo identity provider")');
		await page.waitForURL(
			(u) => u.origin === new URL(issuer()).origin && u.pathname.startsWith('/interaction/')
		);
		await page.fill('#email', rhea.email);
		await page.fill('#password', FAKE_OIDC_PASSWORD);
		await page.screenshot({ path: shot('provider-login'), fullPage: true });
		await page.click('button:has-text("Sign in at the identity provider")');
		await page.waitForURL(`${env.baseUrl}/p/${p.key}/requirements`);
		// The role from the group: engineer, so the page offers a new requirement.
		expect(await page.textContent('header')).toContain('Rhea Ostrander');
		expect(await page.textContent('header')).toContain('your role: engineer');
		expect(await page.isVisible('a:has-text("New requirement")')).toBe(true);
		const user = await testDb()('users').where({ email: rhea.email }).first();
		const signInsBefore = await testDb()('audit_events')
			.where({ action: 'auth.sign-in', subject_id: String(user.id) })
			.count<{ n: string }[]>('* as n');
		expect(
			await testDb()('memberships').where({ user_id: user.id, project_id: p.id }).first('role', 'source')
		).toEqual({
			role: 'engineer',
			source: 'sso'
		});

		// A fresh login before signing: the provider asks again although its session is alive.
		const back = `/p/${p.key}/requirements`;
		await page.goto(`${env.baseUrl}/signin/fresh?redirectTo=${encodeURIComponent(back)}`);
		const asked: URL[] = [];
		page.on('request', (r) => {
			const u = new URL(r.url());
			if (u.origin === new URL(issuer()).origin && u.pathname === '/auth' && u.searchParams.has('client_id'))
				asked.push(u);
		});
		await page.click('button:has-text("Sign in again at Demo identity provider")');
		await page.waitForSelector('text=Loopwarden asks you to sign in again to confirm it is you.');
		expect(asked[0]?.searchParams.get('prompt')).toBe('login');
		expect(asked[0]?.searchParams.get('max_age')).toBe('0');
		await page.fill('#email', rhea.email);
		await page.fill('#password', FAKE_OIDC_PASSWORD);
		await page.click('button:has-text("Sign in at the identity provider")');
		// /signin/fresh/done accepted the auth_time and went on to the page that asked.
		await page.waitForURL(`${env.baseUrl}${back}`);
		await page.screenshot({ path: shot('after-fresh-login'), fullPage: true });
		const signIns = await testDb()('audit_events')
			.where({ action: 'auth.sign-in', subject_id: String(user.id) })
			.orderBy('seq');
		// One more sign-in (the fresh one) since the sign-in above; its auth_time is newer and recent.
		expect(signIns.length).toBe(Number(signInsBefore[0].n) + 1);
		const [first, fresh] = signIns.slice(-2).map((e) => e.after.authTime as number);
		expect(fresh).toBeGreaterThanOrEqual(first);
		expect(Date.now() / 1000 - fresh).toBeLessThan(60);
		await ctx.close();
	}, 90_000);
});
