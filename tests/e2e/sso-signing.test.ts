import { mkdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { FAKE_OIDC_PASSWORD, FAKE_OIDC_USERS } from '../../fakes/oidc-users';
import { addMember, createProject, createUser, testDb } from '../factories';
import { useBrowser } from '../helpers/browser';
import { env } from '../helpers/env';
import { signedIn } from '../helpers/http';
import { issuer } from '../helpers/oidc';

// In Chromium: a reviewer who signs in only through the identity-provider stand-in (no Loopwarden
// password) approves a requirement revision; the signing form sends them to the provider, which asks
// for the credentials again (prompt=login, max_age=0), and back in the app the approval is recorded as
// confirmed by identity provider re-authentication. With JavaScript on and off. Screenshots go to
// SHOTS_DIR (default /tmp/shots-oidc).

const SHOTS = process.env.SHOTS_DIR ?? '/tmp/shots-oidc';
const oskar = FAKE_OIDC_USERS.find((u) => u.email.startsWith('oskar.lindvall'))!;

mkdirSync(SHOTS, { recursive: true });
const browserOf = useBrowser();

describe.each([true, false])(
	'signing an approval at the identity provider (JavaScript %s)',
	(javaScriptEnabled) => {
		it('approves a requirement by signing in again at the provider', async () => {
			const shot = (name: string) => `${SHOTS}/${name}${javaScriptEnabled ? '' : '-nojs'}.png`;
			const p = await createProject({ name: 'Signed at the provider' });
			const author = await createUser({ name: 'Rowan Tiller' });
			await addMember(author.id, p.id, 'engineer');

			// Oskar signs in with single sign-on (his account is made just in time, without a password).
			const ctx = await browserOf().newContext({ javaScriptEnabled });
			const page = await ctx.newPage();
			await page.goto(`${env.baseUrl}/signin`);
			await page.click('button:has-text("Continue with Demo identity provider")');
			await page.waitForURL((u) => u.origin === new URL(issuer()).origin);
			await page.fill('#email', oskar.email);
			await page.fill('#password', FAKE_OIDC_PASSWORD);
			await page.click('button:has-text("Sign in at the identity provider")');
			await page.waitForURL(
				(u) => u.origin === new URL(env.baseUrl).origin && !u.pathname.startsWith('/signin')
			);
			const user = await testDb()('users').where({ email: oskar.email }).first();
			expect(user.password_hash).toBeNull();
			await addMember(Number(user.id), p.id, 'certifier');

			// The author writes the requirement and names Oskar as its reviewer.
			const eng = await signedIn(author.email, author.password);
			const res = await eng.json(`/api/v1/projects/${p.key}/requirements`, 'POST', {
				title: 'Pitch damper inspection',
				statement: 'The pitch damper gain schedule shall be inspected against the sector [0, 2].',
				level: 'loop',
				assuranceLevel: 'C',
				methods: ['inspection']
			});
			expect(res.status, await res.clone().text()).toBe(201);
			const id = (await res.json()).requirement.id as number;
			const named = await eng.action(`/p/${p.key}/requirements/${id}?/requestReview`, {
				revision: '1',
				reviewers: String(user.id)
			});
			expect(named.type, JSON.stringify(named)).toBe('success');

			// Oskar decides: no password field, a button that goes to the provider.
			await page.goto(`${env.baseUrl}/p/${p.key}/requirements/${id}`);
			await page.waitForSelector('[data-testid="sign-via-provider"]');
			expect(await page.locator('#decide-password').count()).toBe(0);
			await page.check('input[name="decision"][value="approve"]');
			await page.fill('#decide-comment', 'Schedule inspected.');
			await page.screenshot({ path: shot('sign-at-provider-form'), fullPage: true });
			const asked: URL[] = [];
			page.on('request', (r) => {
				const u = new URL(r.url());
				if (
					u.origin === new URL(issuer()).origin &&
					u.pathname === '/auth' &&
					u.searchParams.has('client_id')
				)
					asked.push(u);
			});
			await page.click('button:has-text("Sign the decision at Demo identity provider")');
			// The provider asks again although its session is alive.
			await page.waitForSelector('text=Loopwarden asks you to sign in again to confirm it is you.');
			expect(asked[0]?.searchParams.get('prompt')).toBe('login');
			expect(asked[0]?.searchParams.get('max_age')).toBe('0');
			expect(asked[0]?.searchParams.get('redirect_uri')).toBe(`${env.baseUrl}/signin/sign/callback`);
			await page.fill('#email', oskar.email);
			await page.fill('#password', FAKE_OIDC_PASSWORD);
			await page.screenshot({ path: shot('sign-at-provider-login'), fullPage: true });
			await page.click('button:has-text("Sign in at the identity provider")');
			// Back at the requirement, or a refusal page that says why (the message goes into the failure).
			// A wait, not a timing check: the full run keeps the machine busy.
			await page
				.waitForURL(`${env.baseUrl}/p/${p.key}/requirements/${id}`, { timeout: 90_000 })
				.catch(async (e) => {
					throw new Error(`${(e as Error).message}\nat ${page.url()}:\n${await page.innerText('body')}`);
				});
			await page.waitForSelector('text=Signer confirmed by identity provider re-authentication');
			await page.screenshot({ path: shot('signed-at-provider'), fullPage: true });
			const sig = await testDb()('signatures').where({ target_type: 'requirement', target_id: id }).first();
			expect(sig).toMatchObject({
				act: 'requirement.approve',
				signer_email: oskar.email,
				confirmed_by: 'identity provider re-authentication',
				comment: 'Schedule inspected.'
			});
			expect((await testDb()('requirements').where({ id }).first('review_state')).review_state).toBe(
				'approved'
			);
			await ctx.close();
		}, 180_000);
	}
);
