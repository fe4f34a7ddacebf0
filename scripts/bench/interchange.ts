// Bench section: requirements in and out as ReqIF on 10,000 generated requirements (the trace bench's
// generator: links, specifications, model versions). Exports the project (time to the last byte), then
// imports that file into an empty project holding the same models: the preview (upload, read, compare)
// and the confirm (one transaction through the requirement service), timed, with the app server's peak
// RSS sampled every 10 ms. A scratch database and its own app build and port, like the trace bench.
//   tsx scripts/bench/interchange.ts      (or npm run bench -- import)
//   BENCH_REQUIREMENTS=10000 BENCH_PORT=4198
import { execFileSync, spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync } from 'node:fs';
import knexFactory from 'knex';
import { ROOT, rssBytes, scratchDatabase, signIn, type BenchResult } from './common';
import { generate } from './trace';

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export async function importSection(): Promise<BenchResult> {
	const n = Number(process.env.BENCH_REQUIREMENTS ?? 10_000);
	const port = Number(process.env.BENCH_PORT ?? 4198);
	const base = `http://127.0.0.1:${port}`;
	const scratch = await scratchDatabase(`lw_bench_import_${process.pid}`);
	let app: ChildProcess | undefined;
	try {
		const env = { ...process.env, DATABASE_URL: scratch.url };
		const { hashPassword } = await import('../../src/lib/server/passwords');
		const password = 'bench-password-123';
		const counts = await generate(scratch.url, n, await hashPassword(password));
		// The target: an empty project with the same models (same content, so the same hashes).
		const k = knexFactory({ client: 'pg', connection: scratch.url });
		try {
			const [t] = await k('projects')
				.insert({ key: 'BENCHIN', name: 'Bench project', description: 'import target' })
				.returning('id');
			const user = await k('users').where({ email: 'bench@example.test' }).first('id');
			await k('memberships').insert({ user_id: user.id, project_id: t.id, role: 'engineer' });
			await k.raw(
				`insert into models (project_id, name, latest_version) select ?, name, latest_version from models where project_id = (select id from projects where key = 'BENCH')`,
				[t.id]
			);
			await k.raw(
				`insert into model_versions (model_id, version, note, content, content_hash)
				select tm.id, v.version, v.note, v.content, v.content_hash from model_versions v
				join models sm on sm.id = v.model_id join models tm on tm.name = sm.name and tm.project_id = ?
				where sm.project_id = (select id from projects where key = 'BENCH')`,
				[t.id]
			);
			await k.raw('analyze');
		} finally {
			await k.destroy();
		}

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
				DEMO_MODE: 'false',
				BODY_SIZE_LIMIT: 'Infinity',
				IMPORT_MAX_BYTES: String(256 * 1024 * 1024)
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
		let peak = 0;
		const sampler = setInterval(() => {
			try {
				peak = Math.max(peak, rssBytes(app!.pid!) / 1024 / 1024);
			} catch {
				// process gone
			}
		}, 10);

		const exportMs: number[] = [];
		let file = '';
		for (let i = 0; i < 3; i++) {
			const t = performance.now();
			const res = await fetch(`${base}/api/v1/projects/BENCH/requirements.reqif`, { headers: { cookie } });
			file = await res.text();
			if (res.status !== 200) throw new Error(`export: HTTP ${res.status}`);
			exportMs.push(performance.now() - t);
		}
		const exportPeak = peak;
		console.error(
			`[bench] export of ${n} requirements: ${(file.length / 1e6).toFixed(1)} MB, ${exportMs.map(Math.round).join('/')} ms`
		);
		// The generator writes "TBD" into some approved statements, which the requirement rules refuse
		// (a placeholder blocks approval); the file gets a number there instead.
		const upload = file.replaceAll('TBD', '3');

		peak = 0;
		const t0 = performance.now();
		const fd = new FormData();
		fd.set('file', new Blob([upload]), 'bench.reqif');
		const pre = await fetch(`${base}/api/v1/projects/BENCHIN/imports`, {
			method: 'POST',
			headers: { cookie, origin: base, accept: 'application/json' },
			body: fd
		});
		const preview = await pre.json();
		if (pre.status !== 201)
			throw new Error(`preview: HTTP ${pre.status} ${JSON.stringify(preview).slice(0, 300)}`);
		if (preview.problems.length)
			throw new Error(`preview problems: ${JSON.stringify(preview.problems.slice(0, 3))}`);
		const t1 = performance.now();
		const conf = await fetch(`${base}/api/v1/imports/${preview.id}/confirm`, {
			method: 'POST',
			headers: { cookie, origin: base, accept: 'application/json' }
		});
		const result = await conf.json();
		if (conf.status !== 200)
			throw new Error(`confirm: HTTP ${conf.status} ${JSON.stringify(result).slice(0, 300)}`);
		const t2 = performance.now();
		clearInterval(sampler);

		const previewS = (t1 - t0) / 1000;
		const confirmS = (t2 - t1) / 1000;
		const exportS = Math.max(...exportMs) / 1000;
		const ok = previewS + confirmS <= 20 && peak <= 400 && exportS <= 5;
		return {
			name: `ReqIF in and out, ${preview.counts.new} requirements`,
			figure: `export ${exportS.toFixed(2)} s; preview ${previewS.toFixed(1)} s + import ${confirmS.toFixed(1)} s at peak RSS ${Math.round(peak)} MB`,
			target: 'export <= 5 s; preview + import <= 20 s and <= 400 MB peak server RSS',
			ok,
			details: {
				...counts,
				fileMB: Math.round((file.length / 1e6) * 10) / 10,
				exportMs: exportMs.map(Math.round).join('/'),
				exportPeakRssMB: Math.round(exportPeak),
				created: result.created.length,
				specifications: result.specifications,
				links: result.links
			}
		};
	} finally {
		if (app?.pid) {
			try {
				process.kill(-app.pid, 'SIGTERM');
			} catch {
				// already gone
			}
		}
		await sleep(300);
		await scratch.drop();
	}
}

if (import.meta.url === `file://${process.argv[1]}`) {
	const r = await importSection();
	console.log(`${r.ok ? 'ok  ' : 'MISS'} ${r.name}: ${r.figure} (target: ${r.target})`);
	console.log('     ' + JSON.stringify(r.details));
	process.exit(r.ok ? 0 : 1);
}
