import { mkdirSync, readdirSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { beforeAll, describe, expect, it } from 'vitest';
import { ENGINE_VERSION } from '../../src/lib/stability/index';
import {
	createImportRecord,
	createBaseline,
	createEvidence,
	createModel,
	createModelVersion,
	createRequirement,
	createRun,
	createSpec,
	createTeam,
	lagModel,
	linkRequirements,
	testDb
} from '../factories';
import { signInPage, useBrowser } from '../helpers/browser';
import { env } from '../helpers/env';
import { signedIn } from '../helpers/http';
import { expectMailTo, linkIn } from '../helpers/mail';

// Issue 13: on a 390 x 844 phone every page is usable: no page is wider than the screen, the header is
// not clipped (Sign out reachable), the project areas sit behind a disclosure button, tables scroll in
// their own labelled box. Every route of src/routes is visited, as a role that may see it: a new
// +page.svelte without an entry below fails the first test. LW_SHOTS_DIR=<folder> also saves a
// full-page screenshot of each.

const WIDTH = 390;
const HEIGHT = 844;
const browser = useBrowser();
type Role = 'anonymous' | 'viewer' | 'engineer' | 'analyst' | 'certifier' | 'admin';

/** Route ids (as SvelteKit names them) of every page under src/routes. */
function pageRoutes(): string[] {
	const root = join(process.cwd(), 'src/routes');
	const out: string[] = [];
	const walk = (dir: string) => {
		for (const name of readdirSync(dir)) {
			const p = join(dir, name);
			if (statSync(p).isDirectory()) walk(p);
			else if (name === '+page.svelte') {
				const rel = relative(root, dir)
					.split(sep)
					.filter((s) => s && !/^\(.*\)$/.test(s));
				out.push('/' + rel.join('/'));
			}
		}
	};
	walk(root);
	return out.sort();
}

let team: Awaited<ReturnType<typeof createTeam>>;
const ids: Record<string, string | number> = {};

beforeAll(async () => {
	team = await createTeam();
	const pid = team.project.id;
	const model = await createModel(pid, {
		name: 'Elevon actuator, left outboard',
		ownerId: team.users.analyst.id
	});
	const v1 = await createModelVersion(model.id, lagModel(1, 0.1));
	await createModelVersion(model.id, lagModel(1.2, 0.1));
	const sys = await createRequirement(pid, {
		title: 'Pitch axis absolute stability with a saturating elevon actuator',
		level: 'system',
		methods: ['analysis', 'test'],
		ownerId: team.users.engineer.id,
		statement:
			'The pitch-axis loop shall remain absolutely stable for every time-invariant actuator gain in the sector [0.4, 1.8], including the saturated region of the left outboard elevon actuator at every operating point of the envelope.'
	});
	await createSpec(sys.id, { modelId: model.id, check: { type: 'circle', sector: [0.4, 1.8] } });
	await createRun(sys.id, {
		engineVersion: ENGINE_VERSION,
		verdict: 'pass',
		result: { type: 'circle', verdict: 'pass', margin: 0.3, numbers: {}, explanation: 'scripted' }
	});
	const loop = await createRequirement(pid, { title: 'Elevon servo loop', level: 'loop', methods: ['test'] });
	await linkRequirements(loop.id, sys.id);
	const ev = await createEvidence(pid, [sys.id, loop.id], { title: 'Elevon rig frequency sweep, run 3' });
	const certifier = await signedIn(team.users.certifier.email, team.users.certifier.password);
	const frozen = await certifier.json(`/api/v1/projects/${team.project.key}/baselines`, 'POST', {
		label: 'Submission to the authority, issue 1',
		password: team.users.certifier.password
	});
	const baseline = frozen.status === 201 ? Number((await frozen.json()).id) : (await createBaseline(pid)).id;
	// A finding raised by hand (after the freeze: an open finding refuses one).
	const engineer = await signedIn(team.users.engineer.email, team.users.engineer.password);
	await engineer.action(`/p/${team.project.key}/findings?/raise`, {
		requirementId: String(sys.id),
		title: 'Rig trace shows a lightly damped mode near 9 rad/s',
		description: 'seen on the phone-layout rig'
	});
	const finding = await testDb()('findings').where({ requirement_id: sys.id }).first('id');
	// An invitation and a password reset, by the app's own mail (their links carry the tokens).
	const admin = await signedIn(team.users.admin.email, team.users.admin.password);
	const invited = `phone-invite-${Date.now()}@example.test`;
	await admin.action(`/admin/projects/${team.project.key}?/invite`, { email: invited, role: 'viewer' });
	const inviteLink = linkIn(await expectMailTo(invited, { subject: /invited/ }), '/invitation/');
	const anon = await signedIn(team.users.viewer.email, team.users.viewer.password);
	await anon.action('/forgot', { email: team.users.viewer.email });
	const resetLink = linkIn(await expectMailTo(team.users.viewer.email, { subject: /password/i }), '/reset/');
	Object.assign(ids, {
		key: team.project.key,
		requirement: sys.id,
		model: model.id,
		version: v1.version,
		evidence: ev.id,
		baseline,
		finding: finding ? Number(finding.id) : 0,
		invitation: inviteLink,
		reset: resetLink,
		importId: await createImportRecord(pid)
	});
});

/** Each route: the address to open and the role that opens it. */
function routes(): Record<string, { path: string; role: Role }> {
	const p = `/p/${ids.key}`;
	return {
		'/': { path: '/', role: 'viewer' },
		'/signin': { path: '/signin', role: 'anonymous' },
		'/signin/sso': { path: '/signin/sso', role: 'anonymous' },
		'/signin/fresh': { path: '/signin/fresh', role: 'viewer' },
		'/signin/fresh/done': { path: '/signin/fresh/done', role: 'viewer' },
		'/signin/sign/callback': { path: '/signin/sign/callback', role: 'viewer' },
		'/signout': { path: '/signout', role: 'viewer' },
		'/forgot': { path: '/forgot', role: 'anonymous' },
		'/reset/[token]': { path: String(ids.reset), role: 'anonymous' },
		'/invitation/[token]': { path: String(ids.invitation), role: 'anonymous' },
		'/methods': { path: '/methods', role: 'viewer' },
		'/account': { path: '/account', role: 'viewer' },
		'/admin': { path: '/admin', role: 'admin' },
		'/admin/audit': { path: '/admin/audit', role: 'admin' },
		'/admin/mail': { path: '/admin/mail', role: 'admin' },
		'/admin/projects/[key=projectKey]': { path: `/admin/projects/${ids.key}`, role: 'admin' },
		'/admin/projects/[key=projectKey]/groups': { path: `/admin/projects/${ids.key}/groups`, role: 'admin' },
		'/p/[key=projectKey]/findings': { path: `${p}/findings`, role: 'viewer' },
		'/p/[key=projectKey]/findings/[id=id]': { path: `${p}/findings/${ids.finding}`, role: 'viewer' },
		'/p/[key=projectKey]': { path: p, role: 'viewer' },
		'/p/[key=projectKey]/requirements': { path: `${p}/requirements`, role: 'viewer' },
		'/p/[key=projectKey]/requirements/new': { path: `${p}/requirements/new`, role: 'engineer' },
		'/p/[key=projectKey]/requirements/[id=id]': {
			path: `${p}/requirements/${ids.requirement}`,
			role: 'engineer'
		},
		'/p/[key=projectKey]/requirements/[id=id]/edit': {
			path: `${p}/requirements/${ids.requirement}/edit`,
			role: 'engineer'
		},
		'/p/[key=projectKey]/models': { path: `${p}/models`, role: 'analyst' },
		'/p/[key=projectKey]/models/new': { path: `${p}/models/new`, role: 'analyst' },
		'/p/[key=projectKey]/models/[id=id]': { path: `${p}/models/${ids.model}`, role: 'analyst' },
		'/p/[key=projectKey]/models/[id=id]/publish': {
			path: `${p}/models/${ids.model}/publish`,
			role: 'analyst'
		},
		'/p/[key=projectKey]/models/[id=id]/v/[version=id]': {
			path: `${p}/models/${ids.model}/v/${ids.version}`,
			role: 'analyst'
		},
		'/p/[key=projectKey]/graph': { path: `${p}/graph`, role: 'viewer' },
		'/p/[key=projectKey]/evidence': { path: `${p}/evidence`, role: 'certifier' },
		'/p/[key=projectKey]/evidence/[id=id]': { path: `${p}/evidence/${ids.evidence}`, role: 'certifier' },
		'/p/[key=projectKey]/trace': { path: `${p}/trace`, role: 'certifier' },
		'/p/[key=projectKey]/baselines': { path: `${p}/baselines`, role: 'certifier' },
		'/p/[key=projectKey]/baselines/[id=id]': { path: `${p}/baselines/${ids.baseline}`, role: 'certifier' },
		'/p/[key=projectKey]/baselines/compare': {
			path: `${p}/baselines/compare?from=${ids.baseline}&to=now`,
			role: 'certifier'
		},
		'/p/[key=projectKey]/coverage': { path: `${p}/coverage`, role: 'viewer' },
		'/p/[key=projectKey]/imports': { path: `${p}/imports`, role: 'engineer' },
		'/p/[key=projectKey]/imports/[id=id]': { path: `${p}/imports/${ids.importId}`, role: 'engineer' }
	};
}

const contexts = new Map<Role, BrowserContext>();
async function pageAs(role: Role): Promise<Page> {
	let ctx = contexts.get(role);
	if (!ctx) {
		ctx = await browser().newContext({
			viewport: { width: WIDTH, height: HEIGHT },
			isMobile: true,
			hasTouch: true,
			deviceScaleFactor: 1
		});
		contexts.set(role, ctx);
		if (role !== 'anonymous') {
			const u = team.users[role];
			const page = await ctx.newPage();
			await signInPage(page, u.email, u.password);
			await page.close();
		}
	}
	return ctx.newPage();
}

describe('every page at 390 x 844', () => {
	it('the route list covers every +page.svelte of src/routes', () => {
		const listed = Object.keys(routes()).sort();
		expect(
			pageRoutes().filter((r) => !listed.includes(r)),
			'routes without an entry here'
		).toEqual([]);
		expect(
			listed.filter((r) => !pageRoutes().includes(r)),
			'entries without a route'
		).toEqual([]);
	});

	it('no page is wider than the screen, the header is whole and Sign out is reachable', async () => {
		const shots = process.env.LW_SHOTS_DIR;
		if (shots) mkdirSync(shots, { recursive: true });
		const wide: string[] = [];
		for (const [route, { path, role }] of Object.entries(routes())) {
			const page = await pageAs(role);
			try {
				const res = await page.goto(env.baseUrl + path, { waitUntil: 'load' });
				expect(res?.status(), `${route} (${path}) as ${role}`).toBeLessThan(400);
				// Hydration and the first data the page fetches by itself (matrix rows, graph, plots).
				await page.waitForTimeout(600);
				const width = await page.evaluate(() => document.documentElement.scrollWidth);
				if (width > WIDTH) {
					// Name the widest elements, so a failure says where to look.
					const culprits = await page.evaluate((w) => {
						const out: string[] = [];
						for (const el of Array.from(document.querySelectorAll('body *'))) {
							const r = el.getBoundingClientRect();
							if (r.right > w + 1 && !el.closest('.table-box, [role=region]'))
								out.push(
									`${el.tagName.toLowerCase()}.${(el.className || '').toString().slice(0, 40)} right=${Math.round(r.right)}`
								);
						}
						return out.slice(0, 4);
					}, WIDTH);
					wide.push(`${route} (${role}): ${width} px: ${culprits.join('; ')}`);
				}
				if (role !== 'anonymous') {
					const signOut = page.getByRole('button', { name: 'Sign out' });
					await expect(signOut.isVisible(), `${route}: Sign out visible`).resolves.toBe(true);
					const box = await signOut.boundingBox();
					expect(box && box.x >= 0 && box.x + box.width <= WIDTH, `${route}: Sign out on screen`).toBe(true);
				}
				if (shots) {
					const name = route.replace(/\[([a-z]+)(=[a-zA-Z]+)?\]/g, '$1').replace(/\//g, '_') || '_';
					await page.screenshot({ path: join(shots, `${name || 'home'}.png`), fullPage: true });
				}
			} finally {
				await page.close();
			}
		}
		expect(wide, 'pages wider than 390 px').toEqual([]);
	}, 300_000);

	it('project areas: a disclosure button opens and closes the menu; tables scroll in labelled boxes', async () => {
		const page = await pageAs('certifier');
		try {
			await page.goto(`${env.baseUrl}/p/${ids.key}/baselines`);
			const button = page.locator('button[aria-controls=project-areas]');
			await expect.poll(() => button.isVisible()).toBe(true);
			expect(await button.getAttribute('aria-expanded')).toBe('false');
			const areas = page.locator('#project-areas');
			expect(await areas.isVisible()).toBe(false);
			await button.click();
			expect(await button.getAttribute('aria-expanded')).toBe('true');
			await page.locator('#project-areas a', { hasText: 'Coverage' }).click();
			await page.waitForURL(/\/coverage$/);
			expect(await areas.isVisible()).toBe(false);
			// Every table of the coverage page is inside a named, focusable scroll box.
			const tables = await page.locator('main table').count();
			expect(tables).toBeGreaterThan(0);
			const boxed = await page.locator('main [role=region][aria-label][tabindex="0"] table').count();
			expect(boxed).toBe(tables);
		} finally {
			await page.close();
		}
	});
});
