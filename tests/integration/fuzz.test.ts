import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTestDb, createTeam, testDb } from '../factories';
import { Client, signedIn } from '../helpers/http';
import type { RouteCase } from './route-table/types';

// Property-based fuzzing of every mutating form action and API endpoint in the role-by-route table:
// malformed, oversized, wrongly typed and hostile values. Always a 4xx (a JSON error or a form
// failure), never a 5xx; and when every answer was a refusal, no row of the database changed.

const RUNS = Number(process.env.LW_FUZZ_RUNS ?? 500);
const CONCURRENCY = 8;

const modules = import.meta.glob<{
	cases: RouteCase[];
	prepare?: (ctx: {
		projectKey: string;
		otherProjectKey: string;
		users: Awaited<ReturnType<typeof createTeam>>['users'];
	}) => Promise<Record<string, string>>;
}>('./route-table/*.ts', { eager: true });
const mutating = Object.values(modules)
	.flatMap((m) => m.cases ?? [])
	.filter((c) => c.method.startsWith('ACTION ') || ['POST', 'PUT', 'PATCH', 'DELETE'].includes(c.method))
	// Signing out is not an input-handling endpoint; it has no fields. The access edges are refused
	// before any input is read.
	.filter((c) => c.route !== '/signout' && !c.edge);

const hostileString = fc.oneof(
	fc.constantFrom(
		"'; drop table users; --",
		'" or 1=1 --',
		'<script>alert(1)</script>',
		'<img src=x onerror=alert(1)>',
		'{{7*7}}',
		'${process.exit(1)}',
		'../../etc/passwd',
		'\u0000',
		'\u202e\u202dabc',
		'\ud800',
		'🛩️'.repeat(50),
		'NaN',
		'Infinity',
		'-0',
		'1e309',
		'-1e309',
		'0x1F',
		'9'.repeat(400),
		' ',
		'',
		'null',
		'undefined',
		'[object Object]',
		'__proto__',
		'constructor'
	),
	fc.string({ maxLength: 40 }),
	fc.string({ unit: 'binary', maxLength: 60 }),
	fc.string({ minLength: 5000, maxLength: 12000 }).map((s) => s || 'x'.repeat(6000))
);

function deep(depth: number): unknown {
	let v: unknown = 'x';
	for (let i = 0; i < depth; i++) v = { a: [v] };
	return v;
}

const hostileJson: fc.Arbitrary<unknown> = fc.oneof(
	hostileString,
	fc.double(),
	fc.constantFrom(1e308, -1e308, Number.MAX_SAFE_INTEGER + 2, -0, 0, 1, -1, true, false, null),
	fc.constantFrom(deep(200), deep(2000), [], {}, [[[]]], { __proto__: { admin: true } }),
	fc.array(hostileString, { maxLength: 5 }),
	fc.dictionary(hostileString, hostileString, { maxKeys: 4 })
);

/** Field values for a form: the case's own fields with hostile values, plus stray fields. */
function formBody(c: RouteCase) {
	const keys = Object.keys(c.body ?? {});
	return fc
		.record({
			known: fc.tuple(...(keys.length ? keys.map(() => hostileString) : [hostileString])),
			extra: fc.dictionary(
				fc.constantFrom('id', 'role', 'admin', 'userId', '__proto__', 'x'),
				hostileString,
				{ maxKeys: 2 }
			)
		})
		.map(({ known, extra }) => {
			const out: Record<string, string> = { ...extra };
			keys.forEach((k, i) => (out[k] = known[i]));
			return out;
		});
}

/** A JSON body: the case's own keys with hostile values, or a hostile document, or not JSON at all. */
function apiBody(c: RouteCase): fc.Arbitrary<{ raw: string; type: string }> {
	const keys = Object.keys(c.body ?? {});
	const shaped = fc.tuple(...(keys.length ? keys.map(() => hostileJson) : [hostileJson])).map((vals) => {
		const o: Record<string, unknown> = {};
		keys.forEach((k, i) => (o[k] = vals[i]));
		return { raw: JSON.stringify(o), type: 'application/json' };
	});
	const whole = hostileJson.map((v) => ({ raw: JSON.stringify(v) ?? 'null', type: 'application/json' }));
	const broken = fc
		.constantFrom('{', '{"a":', 'NaN', '[1,2', '\u0000', '{"a":1}garbage')
		.map((raw) => ({ raw, type: 'application/json' }));
	const wrongType = hostileString.map((raw) => ({
		raw,
		type: fc.sample(
			fc.constantFrom('text/plain', 'application/xml', 'application/x-www-form-urlencoded'),
			1
		)[0]
	}));
	return fc.oneof(shaped, whole, broken, wrongType);
}

// Tables whose rows a refused request may still add (attempt counters, the audit trail of refusals, mail),
// and the workers' heartbeats, which move by themselves.
const EXCLUDED = new Set([
	'worker_heartbeats',
	'sign_in_attempts',
	'audit_events',
	'mail_outbox',
	'knex_migrations',
	'knex_migrations_lock'
]);

// Tables whose rows move by themselves while queued work runs (a data package's progress and state, as
// the worker builds one an accepted request queued): a refused request must add none, so they count.
const COUNTED_ONLY = new Set(['data_packages']);

async function fingerprint(): Promise<string> {
	const tables: string[] = (
		await testDb().raw(`select tablename from pg_tables where schemaname = 'public' order by tablename`)
	).rows.map((r: { tablename: string }) => r.tablename);
	const parts: string[] = [];
	for (const t of tables) {
		if (EXCLUDED.has(t)) continue;
		if (COUNTED_ONLY.has(t)) {
			const r = await testDb().raw(`select count(*)::text as n from "${t}"`);
			parts.push(`${t}:${r.rows[0].n}`);
			continue;
		}
		const r = await testDb().raw(
			`select count(*)::text as n, coalesce(md5(string_agg(x::text, ',' order by x::text)), '') as h from "${t}" x`
		);
		parts.push(`${t}:${r.rows[0].n}:${r.rows[0].h}`);
	}
	return parts.join('|');
}

async function pool<T>(items: T[], n: number, fn: (t: T) => Promise<void>) {
	let i = 0;
	await Promise.all(
		Array.from({ length: n }, async () => {
			while (i < items.length) await fn(items[i++]);
		})
	);
}

describe('fuzzing every mutating form action and API endpoint', () => {
	let admin: Client;
	const fill: Record<string, string> = {};
	beforeAll(async () => {
		const team = await createTeam();
		fill.key = team.project.key;
		for (const m of Object.values(modules)) {
			if (m.prepare)
				Object.assign(
					fill,
					await m.prepare({
						projectKey: team.project.key,
						otherProjectKey: team.other.key,
						users: team.users
					})
				);
		}
		admin = await signedIn(team.users.admin.email, team.users.admin.password);
	});
	afterAll(closeTestDb);

	it('has endpoints to fuzz', () => {
		expect(mutating.length).toBeGreaterThan(5);
	});

	for (const c of mutating) {
		it(`${c.method} ${c.path}: ${RUNS} hostile inputs, never a 5xx, nothing changed when refused`, async () => {
			const path = c.path.replace(/\{(\w+)\}/g, (_, k) => fill[k] ?? `{${k}}`);
			const before = await fingerprint();
			const problems: string[] = [];
			let accepted = 0;
			if (c.method.startsWith('ACTION ')) {
				const name = c.method.slice(7);
				const url = name === 'default' ? path : `${path}?/${name}`;
				const bodies = fc.sample(formBody(c), RUNS);
				await pool(bodies, CONCURRENCY, async (body) => {
					const r = await admin.action(url, body);
					if (r.type === 'error' || r.httpStatus >= 500)
						problems.push(
							`${r.httpStatus} ${JSON.stringify(r.error)} for ${JSON.stringify(body).slice(0, 200)}`
						);
					else if (r.type === 'success' || r.type === 'redirect') accepted++;
				});
			} else {
				const bodies = fc.sample(apiBody(c), RUNS);
				await pool(bodies, CONCURRENCY, async (b) => {
					const res = await admin.request(path, {
						method: c.method,
						headers: { 'content-type': b.type, accept: 'application/json' },
						body: b.raw
					});
					const text = await res.text();
					if (res.status >= 500)
						problems.push(`${res.status} ${text.slice(0, 200)} for ${b.raw.slice(0, 200)}`);
					else if (res.status >= 400 && !/^\s*\{/.test(text))
						problems.push(`${res.status} is not JSON: ${text.slice(0, 100)}`);
					else if (res.status < 300) accepted++;
				});
			}
			expect(problems.slice(0, 5)).toEqual([]);
			if (accepted === 0) expect(await fingerprint()).toBe(before);
		}, 300_000);
	}
});
