// Bench section: one 200 MB evidence upload through the built app, streamed from this process over HTTP,
// into a private object-storage stand-in. Reports the throughput and the peak growth of the app's
// resident memory (VmRSS from /proc/<pid>/status, sampled every 20 ms) over its level just before the
// upload; the target is at most 32 MB of growth. Uses a scratch database in the cluster of DATABASE_URL
// (npm start's cluster when unset) and drops it afterwards.
//   tsx scripts/bench/upload.ts              (or as a section of npm run bench)
//   BENCH_UPLOAD_MB=200
import { execFileSync, spawn, type ChildProcess } from 'node:child_process';
import { createHash, randomBytes } from 'node:crypto';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { request } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import knexFactory from 'knex';
import { startS3Fake } from '../../fakes/s3';
import { hashPassword } from '../../src/lib/server/passwords';
import { ROOT, rssBytes, scratchDatabase, signIn, type BenchResult } from './common';

async function waitFor(url: string, ms = 30_000) {
	const end = Date.now() + ms;
	while (Date.now() < end) {
		try {
			await fetch(url);
			return;
		} catch {
			await new Promise((r) => setTimeout(r, 100));
		}
	}
	throw new Error(`${url} did not answer within ${ms} ms`);
}

/** Stream a multipart upload of `size` bytes of text from memory-light chunks; resolves with the answer. */
function streamUpload(
	base: string,
	path: string,
	cookie: string,
	fields: Record<string, string>,
	size: number
): Promise<{ status: number; body: string; sha256: string; ms: number }> {
	const boundary = '----lwbench' + randomBytes(8).toString('hex');
	const head =
		Object.entries(fields)
			.map(([k, v]) => `--${boundary}\r\ncontent-disposition: form-data; name="${k}"\r\n\r\n${v}\r\n`)
			.join('') +
		`--${boundary}\r\ncontent-disposition: form-data; name="file"; filename="bench-log.txt"\r\ncontent-type: text/plain\r\n\r\n`;
	const tail = `\r\n--${boundary}--\r\n`;
	const line = Buffer.from('0123456789abcdef'.repeat(4).slice(0, 63) + '\n');
	const chunk = Buffer.alloc(1024 * 1024);
	for (let i = 0; i < chunk.length; i += line.length)
		line.copy(chunk, i, 0, Math.min(line.length, chunk.length - i));
	const hash = createHash('sha256');
	const u = new URL(base + path);
	const t0 = performance.now();
	return new Promise((resolve, reject) => {
		const req = request(
			{
				host: u.hostname,
				port: u.port,
				path: u.pathname,
				method: 'POST',
				headers: {
					'content-type': `multipart/form-data; boundary=${boundary}`,
					'content-length': String(Buffer.byteLength(head) + size + Buffer.byteLength(tail)),
					cookie,
					origin: base,
					accept: 'application/json'
				}
			},
			(res) => {
				let body = '';
				res.setEncoding('utf8');
				res.on('data', (d) => (body += d));
				res.on('end', () =>
					resolve({
						status: res.statusCode ?? 0,
						body,
						sha256: hash.digest('hex'),
						ms: performance.now() - t0
					})
				);
			}
		);
		req.on('error', reject);
		req.write(head);
		let sent = 0;
		const pump = () => {
			while (sent < size) {
				const n = Math.min(chunk.length, size - sent);
				const part = n === chunk.length ? chunk : chunk.subarray(0, n);
				hash.update(part);
				sent += n;
				if (!req.write(part)) {
					req.once('drain', pump);
					return;
				}
			}
			req.end(tail);
		};
		pump();
	});
}

export async function uploadSection(): Promise<BenchResult> {
	const megabytes = Number(process.env.BENCH_UPLOAD_MB ?? 200);
	const size = megabytes * 1000 * 1000;
	const scratch = await scratchDatabase(`lw_bench_upload_${process.pid}`);
	const url = new URL(scratch.url);
	const work = mkdtempSync(join(tmpdir(), 'lw-bench-upload-'));
	const buildWork = join(ROOT, '.data', `bench-upload-${process.pid}`);
	const port = 4300 + (process.pid % 500);
	const s3Port = 4900 + (process.pid % 500);
	const origin = `http://127.0.0.1:${port}`;
	let app: ChildProcess | undefined;
	let s3: Awaited<ReturnType<typeof startS3Fake>> | undefined;
	const k = knexFactory({ client: 'pg', connection: url.toString() });
	try {
		const password = 'bench-password-1';
		const [u] = await k('users')
			.insert({
				email: 'bench-upload@example.test',
				display_name: 'Bench',
				password_hash: await hashPassword(password)
			})
			.returning('*');
		const [p] = await k('projects')
			.insert({ key: 'BENCHUP', name: 'Bench', description: 'scratch' })
			.returning('*');
		await k('memberships').insert({ user_id: u.id, project_id: p.id, role: 'engineer' });
		await k('requirements').insert({ project_id: p.id, number: 1, identifier: 'BENCH-1' });

		// The built app, in its own output folders (inside the project, where its packages resolve) so a
		// concurrent build elsewhere is not disturbed.
		const buildDir = join(buildWork, 'build');
		try {
			execFileSync('node_modules/.bin/vite', ['build', '--logLevel', 'error'], {
				cwd: ROOT,
				env: { ...process.env, BUILD_DIR: buildDir, LW_KIT_OUT_DIR: join(buildWork, 'kit') },
				stdio: 'pipe'
			});
		} catch (e) {
			throw new Error(`the build failed:\n${(e as { stderr?: Buffer }).stderr?.toString() ?? e}`, {
				cause: e
			});
		}
		if (!existsSync(buildDir)) throw new Error('the build did not produce ' + buildDir);
		s3 = await startS3Fake({ port: s3Port, dir: join(work, 's3'), buckets: ['bench-evidence'] });
		app = spawn('node', [buildDir], {
			cwd: ROOT,
			env: {
				...process.env,
				DATABASE_URL: url.toString(),
				PORT: String(port),
				HOST: '127.0.0.1',
				ORIGIN: origin,
				AUTH_SECRET: randomBytes(24).toString('hex'),
				AUTH_TRUST_HOST: 'true',
				DEMO_MODE: 'false',
				SMTP_URL: '',
				BODY_SIZE_LIMIT: 'Infinity',
				EVIDENCE_MAX_BYTES: String(256 * 1024 * 1024),
				S3_ENDPOINT: `http://127.0.0.1:${s3Port}`,
				S3_BUCKET: 'bench-evidence',
				S3_ACCESS_KEY_ID: 'S3RVER',
				S3_SECRET_ACCESS_KEY: 'S3RVER'
			},
			stdio: 'ignore'
		});
		await waitFor(origin + '/api/v1/health');
		const cookie = await signIn(origin, 'bench-upload@example.test', password);
		const path = '/api/v1/projects/BENCHUP/evidence';
		const fields = { title: 'bench', kind: 'log', requirementIds: 'BENCH-1' };
		// Warm-up: load the upload route and the storage client before measuring.
		const warm = await streamUpload(origin, path, cookie, fields, 1024 * 1024);
		if (warm.status !== 201) throw new Error(`warm-up upload failed: ${warm.status} ${warm.body}`);
		await new Promise((r) => setTimeout(r, 500));

		const pid = app.pid!;
		const baseline = rssBytes(pid);
		let peak = baseline;
		const timer = setInterval(() => {
			try {
				peak = Math.max(peak, rssBytes(pid));
			} catch {
				// process gone
			}
		}, 20);
		const r = await streamUpload(origin, path, cookie, fields, size);
		clearInterval(timer);
		peak = Math.max(peak, rssBytes(pid));
		if (r.status !== 201) throw new Error(`upload failed: ${r.status} ${r.body}`);
		const rec = JSON.parse(r.body) as { sha256: string; size: number };
		const growth = peak - baseline;
		const mbps = size / 1e6 / (r.ms / 1000);
		const hashOk = rec.sha256 === r.sha256 && rec.size === size;
		return {
			name: `upload of ${megabytes} MB evidence`,
			figure: `${mbps.toFixed(1)} MB/s, server memory growth ${(growth / 1024 / 1024).toFixed(1)} MiB`,
			target: 'memory growth <= 32 MB, SHA-256 as sent',
			ok: growth <= 32 * 1000 * 1000 && hashOk,
			details: {
				bytes: size,
				seconds: Number((r.ms / 1000).toFixed(2)),
				throughputMBps: Number(mbps.toFixed(1)),
				rssBaselineMiB: Number((baseline / 1024 / 1024).toFixed(1)),
				rssPeakMiB: Number((peak / 1024 / 1024).toFixed(1)),
				growthMiB: Number((growth / 1024 / 1024).toFixed(1)),
				sha256Match: hashOk ? 'yes' : 'NO'
			}
		};
	} finally {
		app?.kill('SIGTERM');
		await s3?.close().catch(() => {});
		await k.destroy();
		await new Promise((r) => setTimeout(r, 300));
		await scratch.drop();
		rmSync(work, { recursive: true, force: true });
		rmSync(buildWork, { recursive: true, force: true });
	}
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
	const r = await uploadSection();
	console.log(JSON.stringify(r, null, 2));
	process.exit(r.ok ? 0 : 1);
}
