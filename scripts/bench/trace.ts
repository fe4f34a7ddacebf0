// Bench section: the trace matrix on a generated project of 10,000 requirements with links, model
// versions, analysis runs and evidence rows. Measures the trace-matrix API (p95 of filtered pages, and
// the full set streamed as JSON lines), the XLSX export (time and the server's peak RSS) and the matrix
// page's time to first rows in headless Chromium.
// Everything happens in a scratch database created in the cluster of DATABASE_URL (npm start's cluster
// when unset) and dropped at the end, with its own app server on its own port: the demo data is never
// touched. The app is built into .data/bench-build first.
//   tsx scripts/bench/trace.ts            (or as a section of npm run bench: npm run bench -- trace)
//   BENCH_REQUIREMENTS=10000 BENCH_PORT=4199
import { execFileSync, spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync } from 'node:fs';
import { loadavg } from 'node:os';
import knexFactory from 'knex';
import { ROOT, rssBytes, scratchDatabase, signIn, type BenchResult } from './common';

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const pct = (xs: number[], p: number) => {
	const s = [...xs].sort((a, b) => a - b);
	return s[Math.min(s.length - 1, Math.ceil((p / 100) * s.length) - 1)];
};
const round = (x: number) => Math.round(x * 10) / 10;

const rssMb = (pid: number) => rssBytes(pid) / 1024 / 1024;

/** Fill the scratch database: set-based inserts, a few seconds for 10,000 requirements. */
export async function generate(url: string, n: number, passwordHash: string) {
	const k = knexFactory({ client: 'pg', connection: url });
	try {
		const [p] = await k('projects')
			.insert({ key: 'BENCH', name: 'Bench project', description: 'scratch' })
			.returning('id');
		const pid = Number(p.id);
		await k.raw(
			`insert into users (email, display_name, password_hash) select 'owner' || g || '@example.test', 'Owner ' || g, ? from generate_series(1, 20) g`,
			[passwordHash]
		);
		const [u] = await k('users')
			.insert({ email: 'bench@example.test', display_name: 'Bench Certifier', password_hash: passwordHash })
			.returning('id');
		await k('memberships').insert({ user_id: u.id, project_id: pid, role: 'certifier' });
		await k.raw(
			`insert into models (project_id, name, latest_version) select ?, 'Loop model ' || g, 3 from generate_series(1, 20) g`,
			[pid]
		);
		await k.raw(
			`insert into model_versions (model_id, version, note, content, content_hash)
			select m.id, v, 'v' || v, jsonb_build_object('operatingPoints', jsonb_build_array(jsonb_build_object('label', 'nominal',
				'model', jsonb_build_object('kind', 'tf', 'num', jsonb_build_array(v), 'den', jsonb_build_array(0.1, 1))))),
				encode(sha256(convert_to(m.id || ':' || v, 'UTF8')), 'hex')
			from models m cross join generate_series(1, 3) v where m.project_id = ?`,
			[pid]
		);
		// 1 % system, 19 % subsystem, 80 % loop requirements.
		await k.raw(
			`insert into requirements (project_id, number, identifier) select ?, g, 'BENCH-' || lpad(g::text, 5, '0') from generate_series(1, ?) g`,
			[pid, n]
		);
		await k.raw(`update projects set next_requirement_number = ? where id = ?`, [n + 1, pid]);
		await k.raw(
			`insert into requirement_revisions (requirement_id, revision, title, statement, rationale, level, assurance_level, methods, owner_id, status, content_hash)
			select r.id, 1, 'Stability of loop ' || r.number,
				'The loop ' || r.number || ' shall remain absolutely stable for every nonlinearity in the sector [0, '
					|| (case when r.number % 97 = 0 then 'TBD' else (1 + r.number % 7)::text end) || '] at every operating point.',
				'Gain of the actuator varies with temperature and wear.',
				case when r.number <= ? then 'system' when r.number <= ? then 'subsystem' else 'loop' end,
				(array['A','B','C','D','E'])[1 + r.number % 5],
				case when r.number % 10 < 6 then array['analysis'] when r.number % 10 < 9 then array['analysis','test'] else array['test'] end,
				(select id from users where email = 'owner' || (1 + r.number % 20) || '@example.test'),
				'approved', encode(sha256(convert_to('rev' || r.id, 'UTF8')), 'hex')
			from requirements r where r.project_id = ?`,
			[Math.ceil(n * 0.01), Math.ceil(n * 0.2), pid]
		);
		const sys = Math.ceil(n * 0.01);
		const sub = Math.ceil(n * 0.2);
		await k.raw(
			`insert into requirement_links (child_id, parent_id, child_revision, parent_revision)
			select c.id, p.id, 1, 1 from requirements c join requirements p on p.project_id = c.project_id
				and p.number = case when c.number <= ?::int then 1 + c.number % ?::int else ?::int + 1 + c.number % (?::int - ?::int) end
			where c.project_id = ? and c.number > ?::int`,
			[sub, sys, sys, sub, sys, pid, sys]
		);
		// A specification for every requirement verified by analysis, tracking its model's latest version.
		await k.raw(
			`insert into stability_specs (requirement_id, version, "check", required_margin, model_id, content_hash)
			select r.id, 1, jsonb_build_object('type', 'popov', 'sector', jsonb_build_array(0, 1 + r.number % 7)), 0.2,
				(select id from models where project_id = r.project_id and name = 'Loop model ' || (1 + r.number % 20)),
				encode(sha256(convert_to('spec' || r.id, 'UTF8')), 'hex')
			from requirements r join requirement_revisions v on v.requirement_id = r.id and v.revision = 1
			where r.project_id = ? and 'analysis' = any(v.methods)`,
			[pid]
		);
		await k.raw(
			`update requirements r set current_spec_id = s.id from stability_specs s where s.requirement_id = r.id and r.project_id = ?`,
			[pid]
		);
		// Runs on version 2 (older) and 3 (latest); 2 % of the latest are still queued.
		await k.raw(
			`insert into analysis_runs (project_id, requirement_id, requirement_revision, spec_id, model_version_id, model_hash,
				engine_version, status, verdict, result, worst_point, output_hash, trigger, queued_at, started_at, finished_at, duration_ms)
			select r.project_id, r.id, 1, s.id, mv.id, mv.content_hash, ?,
				case when mv.version = 3 and r.number % 50 = 0 then 'queued' else 'done' end,
				case when mv.version = 3 and r.number % 50 = 0 then null when r.number % 13 = 0 then 'fail' else 'pass' end,
				case when mv.version = 3 and r.number % 50 = 0 then null else jsonb_build_object('type', 'popov',
					'verdict', case when r.number % 13 = 0 then 'fail' else 'pass' end, 'threshold', 1.5 + r.number % 9, 'numbers', '{}'::jsonb,
					'explanation', 'generated') end,
				'nominal', encode(sha256(convert_to('out' || r.id || mv.id, 'UTF8')), 'hex'), 'model-publish',
				now() - (4 - mv.version) * interval '1 day', now() - (4 - mv.version) * interval '1 day',
				case when mv.version = 3 and r.number % 50 = 0 then null else now() - (4 - mv.version) * interval '1 day' end, 12
			from requirements r join stability_specs s on s.id = r.current_spec_id
			join model_versions mv on mv.model_id = s.model_id and mv.version in (2, 3)
			where r.project_id = ?`,
			[
				process.env.BENCH_ENGINE_VERSION ?? (await import('../../src/lib/stability/index')).ENGINE_VERSION,
				pid
			]
		);
		// One evidence item per requirement verified by test; 60 % accepted, 10 % rejected, the rest unreviewed.
		await k.raw(
			`insert into evidence (project_id, created_by) select ?, ? from requirements r
			join requirement_revisions v on v.requirement_id = r.id and v.revision = 1
			where r.project_id = ? and 'test' = any(v.methods)`,
			[pid, u.id, pid]
		);
		await k.raw(
			`insert into evidence_files (evidence_id, revision, title, kind, method, original_name, storage_key, content_type, size_bytes, sha256, uploaded_by, uploaded_by_label)
			select e.id, 1, 'Rig sweep ' || e.id, 'frequency-response', 'test', 'sweep-' || e.id || '.csv', 'bench/' || e.id, 'text/csv', 2048,
				encode(sha256(convert_to('file' || e.id, 'UTF8')), 'hex'), ?, 'bench@example.test'
			from evidence e where e.project_id = ?`,
			[u.id, pid]
		);
		await k.raw(
			`insert into evidence_links (evidence_file_id, requirement_id)
			select f.id, t.id from (select f.id, row_number() over (order by f.id) as i from evidence_files f
				join evidence e on e.id = f.evidence_id where e.project_id = ?) f
			join (select r.id, row_number() over (order by r.number) as i from requirements r
				join requirement_revisions v on v.requirement_id = r.id and v.revision = 1
				where r.project_id = ? and 'test' = any(v.methods)) t on t.i = f.i`,
			[pid, pid]
		);
		await k.raw(
			`insert into evidence_reviews (evidence_file_id, decision, comment, meaning, reviewer_id, reviewer_label, reviewer_role, sha256)
			select f.id, case when f.id % 10 < 6 then 'accepted' else 'rejected' end, 'Reviewed by the bench.', 'verification evidence',
				?, 'bench@example.test', 'certifier', f.sha256
			from evidence_files f join evidence e on e.id = f.evidence_id where e.project_id = ? and f.id % 10 < 7`,
			[u.id, pid]
		);
		await k.raw('analyze');
		const counts = await k.raw(
			`select (select count(*) from requirements)::int as requirements, (select count(*) from requirement_links)::int as links,
				(select count(*) from analysis_runs)::int as runs, (select count(*) from evidence_files)::int as evidence`
		);
		return counts.rows[0] as Record<string, number>;
	} finally {
		await k.destroy();
	}
}

export async function traceSection(): Promise<BenchResult> {
	const n = Number(process.env.BENCH_REQUIREMENTS ?? 10_000);
	const port = Number(process.env.BENCH_PORT ?? 4199);
	const base = `http://127.0.0.1:${port}`;
	const scratch = await scratchDatabase(`lw_bench_trace_${process.pid}`);
	const url = new URL(scratch.url);
	let app: ChildProcess | undefined;
	try {
		const env = { ...process.env, DATABASE_URL: url.toString() };
		const { hashPassword } = await import('../../src/lib/server/passwords');
		const password = 'bench-password-123';
		const tGen = performance.now();
		const counts = await generate(url.toString(), n, await hashPassword(password));
		const generateMs = performance.now() - tGen;

		const buildDir = `${ROOT}.data/bench-build`;
		mkdirSync(`${ROOT}.data`, { recursive: true });
		if (!existsSync(`${buildDir}/index.js`) || process.env.BENCH_REBUILD !== '0') {
			execFileSync('node_modules/.bin/vite', ['build', '--logLevel', 'error'], {
				cwd: ROOT,
				env: { ...env, BUILD_DIR: buildDir },
				stdio: 'ignore'
			});
		}
		app = spawn('node', [buildDir], {
			cwd: ROOT,
			env: {
				...env,
				PORT: String(port),
				HOST: '127.0.0.1',
				ORIGIN: base,
				AUTH_SECRET: 'bench-secret-' + process.pid,
				AUTH_TRUST_HOST: 'true',
				SMTP_URL: '',
				DEMO_MODE: 'false'
			},
			detached: true,
			stdio: 'ignore'
		});
		for (let i = 0; ; i++) {
			try {
				if ((await fetch(`${base}/signin`)).status === 200) break;
			} catch {
				// not up yet
			}
			if (i > 150) throw new Error('the bench app did not start');
			await sleep(200);
		}
		const cookie = await signIn(base, 'bench@example.test', password);
		// The idle server: started and signed in, nothing read yet (the XLSX target is memory above this).
		await sleep(500);
		const rssIdle = rssMb(app.pid!);
		const get = async (path: string) => {
			const t = performance.now();
			const res = await fetch(base + path, { headers: { cookie, accept: 'application/json' } });
			const body = await res.arrayBuffer();
			if (res.status !== 200) throw new Error(`${path}: HTTP ${res.status}`);
			return { ms: performance.now() - t, bytes: body.byteLength, res };
		};
		const api = '/api/v1/projects/BENCH/trace-matrix';

		// Filtered pages: a rotation of typical filters, after a warm-up.
		const filters = [
			'?level=loop&state=not-proved&limit=100',
			'?method=test&limit=100&offset=200',
			'?state=pending&sort=lastChange&dir=desc&limit=100',
			'?q=loop%2012&limit=100',
			'?owner=3&sort=state&limit=100',
			'?assurance=A&level=subsystem&limit=100'
		];
		for (const f of filters) await get(api + f);
		const pageMs: number[] = [];
		for (let i = 0; i < 120; i++) pageMs.push((await get(api + filters[i % filters.length])).ms);

		const fullMs: number[] = [];
		let fullBytes = 0;
		for (let i = 0; i < 3; i++) {
			const r = await get(api + '?all=1');
			fullMs.push(r.ms);
			fullBytes = r.bytes;
		}

		// XLSX: time to the last byte, and the server's RSS sampled every 10 ms meanwhile.
		const rssBefore = rssMb(app.pid!);
		let peak = rssBefore;
		const sampler = setInterval(() => {
			try {
				peak = Math.max(peak, rssMb(app!.pid!));
			} catch {
				// process gone
			}
		}, 10);
		const xlsxMs: number[] = [];
		let xlsxBytes = 0;
		for (let i = 0; i < 2; i++) {
			const r = await get('/api/v1/projects/BENCH/trace-matrix.xlsx');
			xlsxMs.push(r.ms);
			xlsxBytes = r.bytes;
		}
		clearInterval(sampler);

		// The page in Chromium: from navigation to the first matrix rows drawn.
		const { launchBrowser } = await import('../../tests/helpers/browser');
		const browser = await launchBrowser();
		const firstRowsMs: number[] = [];
		let allRowsMs = 0;
		try {
			const ctx = await browser.newContext();
			await ctx.addCookies(
				cookie.split('; ').map((c) => {
					const i = c.indexOf('=');
					return { name: c.slice(0, i), value: c.slice(i + 1), url: base };
				})
			);
			const page = await ctx.newPage();
			for (let i = 0; i < 4; i++) {
				const t = performance.now();
				await page.goto(`${base}/p/BENCH/trace`, { waitUntil: 'commit' });
				await page.waitForSelector('[data-testid=matrix-row]', { timeout: 30_000 });
				const first = performance.now() - t;
				await page.waitForFunction(
					() =>
						(document.querySelector('[data-testid=matrix-status]')?.textContent ?? '').includes('Showing') &&
						!(document.querySelector('[data-testid=matrix-status]')?.textContent ?? '').includes(
							'Loading the rest'
						),
					null,
					{
						timeout: 60_000
					}
				);
				if (i > 0) firstRowsMs.push(first); // the first visit also compiles the page's scripts
				if (i === 3) allRowsMs = performance.now() - t;
			}
			// Scrolling to the end keeps the DOM small (virtualised rows).
			await page.evaluate(() => {
				const el = document.querySelector('[data-testid=matrix-scroller]')!;
				el.scrollTop = el.scrollHeight;
			});
			await sleep(300);
			const rendered = await page.locator('[data-testid=matrix-row]').count();
			await ctx.close();
			const p95 = pct(pageMs, 95);
			const fullMedian = pct(fullMs, 50);
			const xlsxMedian = pct(xlsxMs, 50);
			const firstRows = pct(firstRowsMs, 50);
			const growth = peak - rssIdle;
			const ok = p95 <= 200 && Math.max(...xlsxMs) <= 3000 && growth <= 100 && firstRows <= 1000;
			return {
				name: `trace matrix on ${counts.requirements} requirements`,
				figure: `API p95 ${Math.round(p95)} ms, full set ${Math.round(fullMedian)} ms, XLSX ${(xlsxMedian / 1000).toFixed(2)} s at ${Math.round(growth)} MB above the idle server, first rows ${Math.round(firstRows)} ms`,
				target: 'p95 <= 200 ms, XLSX <= 3 s and <= 100 MB above the idle server, first rows <= 1 s',
				ok,
				details: {
					...counts,
					generateSeconds: round(generateMs / 1000),
					pageRequests: pageMs.length,
					pageP50Ms: Math.round(pct(pageMs, 50)),
					pageP95Ms: Math.round(p95),
					pageMaxMs: Math.round(Math.max(...pageMs)),
					fullSetMs: fullMs.map(Math.round).join('/'),
					fullSetMB: round(fullBytes / 1e6),
					xlsxMs: xlsxMs.map(Math.round).join('/'),
					xlsxMB: round(xlsxBytes / 1e6),
					serverRssIdleMB: Math.round(rssIdle),
					serverRssBeforeXlsxMB: Math.round(rssBefore),
					serverRssPeakMB: Math.round(peak),
					firstRowsMs: firstRowsMs.map(Math.round).join('/'),
					allRowsLoadedMs: Math.round(allRowsMs),
					rowsInDomAfterScrollToEnd: rendered,
					loadAverage1m: Number(loadavg()[0].toFixed(1))
				}
			};
		} finally {
			await browser.close();
		}
	} finally {
		if (app?.pid) {
			try {
				process.kill(-app.pid, 'SIGTERM');
			} catch {
				// gone
			}
			await sleep(500);
		}
		await scratch.drop();
	}
}

if (import.meta.url === `file://${process.argv[1]}`) {
	const r = await traceSection();
	console.log(`${r.ok ? 'ok ' : 'MISS'} ${r.name}: ${r.figure} (target ${r.target})`);
	console.log(r.details);
	process.exit(r.ok ? 0 : 1);
}
