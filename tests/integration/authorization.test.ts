import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addMember, closeTestDb, createTeam, createUser } from '../factories';
import { Client, decodeDevalue, signedIn } from '../helpers/http';
import { CALLERS, type Caller, type Outcome, type RouteCase } from './route-table/types';

// Every page, form action and endpoint against every kind of caller. The list of routes is read
// from src/routes, so a new route without a decision in route-table/ fails here.

const modules = import.meta.glob<{
	cases: RouteCase[];
	prepare?: (ctx: PrepareContext) => Promise<Record<string, string>>;
}>('./route-table/*.ts', { eager: true });
type Users = Awaited<ReturnType<typeof createTeam>>['users'] & {
	adminViewer: Awaited<ReturnType<typeof createUser>>;
};
export interface PrepareContext {
	projectKey: string;
	/** The outsider's project: its resources, addressed through the team project's URLs, are 404s. */
	otherProjectKey: string;
	users: Users;
}
const allCases: RouteCase[] = Object.values(modules).flatMap((m) => m.cases ?? []);

function discover(): { route: string; method: string }[] {
	const root = join(process.cwd(), 'src/routes');
	const found: { route: string; method: string }[] = [];
	const walk = (dir: string) => {
		for (const name of readdirSync(dir)) {
			const p = join(dir, name);
			if (statSync(p).isDirectory()) walk(p);
		}
		const route =
			'/' +
			relative(root, dir)
				.split('/')
				.filter((s) => s && !/^\(.*\)$/.test(s))
				.join('/');
		const names = readdirSync(dir);
		if (names.includes('+page.svelte')) found.push({ route, method: 'GET' });
		const server = names.find((n) => n === '+page.server.ts');
		if (server) {
			const src = readFileSync(join(dir, server), 'utf8');
			const block = src.match(/export const actions = \{([\s\S]*?)\n\} satisfies Actions/);
			if (block)
				for (const m of block[1].matchAll(/^\t(\w+): async/gm))
					found.push({ route, method: `ACTION ${m[1]}` });
		}
		if (names.includes('+server.ts')) {
			const src = readFileSync(join(dir, '+server.ts'), 'utf8');
			for (const m of src.matchAll(/export const (GET|POST|PUT|PATCH|DELETE)\b/g))
				found.push({ route, method: m[1] });
		}
	};
	walk(root);
	return found.map((f) => ({ ...f, route: f.route === '/' ? '/' : f.route.replace(/\/$/, '') }));
}

describe('every route has a decision for every caller', () => {
	it('the table covers every discovered page, action and endpoint', () => {
		const discovered = discover();
		const missing = discovered.filter(
			(d) => !allCases.some((c) => c.route === d.route && c.method === d.method)
		);
		expect(missing, 'routes without an entry in tests/integration/route-table/').toEqual([]);
		const stale = allCases.filter(
			(c) => !discovered.some((d) => d.route === c.route && d.method === c.method)
		);
		expect(stale, 'entries for routes that no longer exist').toEqual([]);
		expect(discovered.length).toBeGreaterThan(20);
	});
});

describe('role-by-route outcomes', () => {
	let team: Awaited<ReturnType<typeof createTeam>>;
	let users: Users;
	const clients = {} as Record<Caller, Client>;
	const fill: Record<string, string> = {};

	async function clientFor(caller: Caller): Promise<Client> {
		if (caller === 'anonymous') return new Client();
		const u = users[caller];
		return signedIn(u.email, u.password);
	}

	beforeAll(async () => {
		team = await createTeam();
		const adminViewer = await createUser({ name: 'Admin viewer', admin: true });
		await addMember(adminViewer.id, team.project.id, 'viewer');
		users = { ...team.users, adminViewer };
		fill.key = team.project.key;
		const ctx = { projectKey: team.project.key, otherProjectKey: team.other.key, users };
		for (const m of Object.values(modules)) {
			if (m.prepare) Object.assign(fill, await m.prepare(ctx));
		}
		for (const c of CALLERS) clients[c] = await clientFor(c);
	});
	afterAll(closeTestDb);

	async function outcome(client: Client, c: RouteCase): Promise<Outcome | string> {
		const path = c.path.replace(/\{(\w+)\}/g, (_, k) => fill[k] ?? `{${k}}`);
		if (c.method === 'GET' && !c.route.startsWith('/api/')) {
			const res = await client.get(path, { accept: 'text/html' });
			await res.arrayBuffer();
			if (res.status >= 300 && res.status < 400) {
				return (res.headers.get('location') ?? '').startsWith('/signin') ? 'signin' : 'ok';
			}
			if (res.status === 200) return 'ok';
			return res.status as Outcome;
		}
		if (c.method.startsWith('ACTION ')) {
			const name = c.method.slice(7);
			const r = await client.action(
				name === 'default' ? path : `${path}?/${name}`,
				(c.body ?? {}) as Record<string, string>
			);
			if (r.type === 'redirect') return r.location?.startsWith('/signin') ? 'signin' : 'ok';
			if (r.type === 'success') return 'ok';
			if (r.type === 'failure')
				return [400, 404, 409, 413, 415, 422, 429].includes(r.status ?? 0) ? 'ok' : `failure ${r.status}`;
			return (r.httpStatus as Outcome) ?? `error`;
		}
		const res = await client.request(path, {
			method: c.method,
			headers: { accept: 'application/json', ...(c.body ? { 'content-type': 'application/json' } : {}) },
			body: c.body ? JSON.stringify(c.body) : undefined
		});
		await res.arrayBuffer();
		if (res.status < 300) return 'ok';
		if ([400, 409, 413, 415, 422].includes(res.status)) return 'ok';
		return res.status as Outcome;
	}

	it('each caller gets the expected outcome on each route', async () => {
		const wrong: string[] = [];
		let checked = 0;
		for (const c of allCases) {
			for (const caller of CALLERS) {
				const got = await outcome(clients[caller], c);
				checked++;
				if (got !== c.expect[caller])
					wrong.push(`${c.method} ${c.path} as ${caller}: expected ${c.expect[caller]}, got ${got}`);
				// Signing out ends the session: sign in again for the next cases.
				if (c.route === '/signout' && c.method.startsWith('ACTION'))
					clients[caller] = await clientFor(caller);
			}
		}
		expect(wrong).toEqual([]);
		expect(checked).toBe(allCases.length * CALLERS.length);
	}, 180_000);

	// A page's buttons come from the capability flags the server checks. The grants are written out
	// here as the product's rules (the same as the route table above says per action), not read from
	// the role table under test; the site administrators get everything, also as a viewer member.
	const ALL = [
		'decideFindings',
		'freezeBaselines',
		'generatePackages',
		'read',
		'reviewEvidence',
		'reviewRequirements',
		'setTolerance',
		'uploadEvidence',
		'workFindings',
		'writeModels',
		'writeRequirements'
	];
	const GRANTED: Partial<Record<Caller, string[]>> = {
		viewer: ['read'],
		engineer: [
			'read',
			'reviewRequirements',
			'setTolerance',
			'uploadEvidence',
			'workFindings',
			'writeRequirements'
		],
		analyst: ['read', 'reviewRequirements', 'setTolerance', 'uploadEvidence', 'workFindings', 'writeModels'],
		certifier: [
			'decideFindings',
			'freezeBaselines',
			'generatePackages',
			'read',
			'reviewEvidence',
			'reviewRequirements',
			'uploadEvidence',
			'workFindings'
		],
		admin: ALL,
		adminViewer: ALL
	};
	const PAGES_WITH_BUTTONS = [
		'/p/{key}/requirements',
		'/p/{key}/requirements/{rqPageId}',
		'/p/{key}/models',
		'/p/{key}/models/{modelId}',
		'/p/{key}/evidence',
		'/p/{key}/evidence/{evidenceId}',
		'/p/{key}/baselines',
		'/p/{key}/findings',
		'/p/{key}/findings/{findingId}'
	];

	it('every page offers exactly what the role table allows the caller', async () => {
		const wrong: string[] = [];
		for (const page of PAGES_WITH_BUTTONS) {
			const path = page.replace(/\{(\w+)\}/g, (_, k) => fill[k]);
			for (const [caller, granted] of Object.entries(GRANTED) as [Caller, string[]][]) {
				const res = await clients[caller].get(`${path}/__data.json`, { accept: 'application/json' });
				const body = (await res.json()) as { type: string; nodes?: ({ data?: unknown[] } | null)[] };
				const node = body.nodes?.at(-1);
				const data = node?.data ? decodeDevalue(JSON.stringify(node.data)) : undefined;
				const can = data?.can as Record<string, boolean> | undefined;
				const got = can
					? Object.entries(can)
							.filter(([, v]) => v === true)
							.map(([k]) => k)
							.sort()
					: `no capability flags (${res.status} ${body.type})`;
				if (JSON.stringify(got) !== JSON.stringify(granted))
					wrong.push(`${page} as ${caller}: expected ${granted.join(', ')}, got ${String(got)}`);
			}
		}
		expect(wrong).toEqual([]);
	});
});
