// A bounded load run against a Loopwarden app on loopback: signs in, then drives the trace-matrix API,
// a requirement page and the analysis API with autocannon. Loopback addresses only.
// @ts-expect-error autocannon ships no type declarations
import autocannon from 'autocannon';

export interface LoadOptions {
	baseUrl: string;
	email: string;
	password: string;
	projectKey: string;
	seconds: number;
	connections: number;
	/**
	 * Seconds of the same load before the measured run, not counted: freshly started app processes
	 * compile their code and prepare their statements during the first seconds (common practice in
	 * load testing is to measure the steady state after such a warm-up). 0 measures from a cold start.
	 */
	warmupSeconds?: number;
}

export interface LoadResult {
	requests: number;
	throughputPerSecond: number;
	latencyMs: { p50: number; p95: number; p99: number; max: number };
	errors: number;
	non2xx: number;
	paths: string[];
	/** Length of the measured run. */
	seconds: number;
}

function assertLoopback(url: string) {
	const host = new URL(url).hostname;
	if (!/^(127\.\d+\.\d+\.\d+|localhost|\[::1\])$/.test(host)) {
		throw new Error(`refusing to load ${host}: loopback addresses only`);
	}
}

async function signIn(o: LoadOptions): Promise<string> {
	const res = await fetch(`${o.baseUrl}/signin`, {
		method: 'POST',
		redirect: 'manual',
		headers: { 'content-type': 'application/x-www-form-urlencoded', origin: o.baseUrl, accept: 'text/html' },
		body: new URLSearchParams({ email: o.email, password: o.password, redirectTo: '/' })
	});
	const cookie = res.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.find((c) => c.includes('authjs.session-token='));
	if (!cookie) throw new Error(`sign-in as ${o.email} failed (HTTP ${res.status})`);
	return cookie;
}

export async function runLoad(o: LoadOptions): Promise<LoadResult> {
	assertLoopback(o.baseUrl);
	const cookie = await signIn(o);
	const headers = { cookie, accept: 'application/json' };
	const list = await fetch(`${o.baseUrl}/api/v1/projects/${o.projectKey}/requirements`, { headers });
	if (!list.ok) throw new Error(`listing requirements failed: HTTP ${list.status}`);
	const body = await list.json();
	const rows: { id: number }[] = Array.isArray(body) ? body : (body.requirements ?? body.rows ?? []);
	if (!rows.length) throw new Error(`project ${o.projectKey} has no requirement to load`);
	const id = rows[0].id;
	const paths = [
		`/api/v1/projects/${o.projectKey}/trace-matrix?limit=50`,
		`/p/${o.projectKey}/requirements/${id}`,
		`/api/v1/requirements/${id}/analyses`
	];
	const run = (seconds: number, samples: number[]) =>
		new Promise<Record<string, unknown>>((resolve, reject) => {
			const instance = autocannon(
				{
					url: o.baseUrl,
					connections: o.connections,
					duration: seconds,
					headers: { cookie },
					requests: paths.map((path) => ({
						method: 'GET',
						path,
						headers: { cookie, accept: path.startsWith('/api') ? 'application/json' : 'text/html' }
					}))
				},
				(err: Error | null, r: Record<string, unknown>) => (err ? reject(err) : resolve(r))
			);
			instance.on('response', (_client: unknown, _status: number, _bytes: number, ms: number) =>
				samples.push(ms)
			);
		});
	if (o.warmupSeconds) await run(o.warmupSeconds, []);
	// Our own latency samples, so that p95 is exact (autocannon's summary has p97.5, not p95).
	const samples: number[] = [];
	const result = await run(o.seconds, samples);
	samples.sort((a, b) => a - b);
	const q = (p: number) =>
		samples.length ? samples[Math.min(samples.length - 1, Math.ceil((p / 100) * samples.length) - 1)] : NaN;
	return {
		requests: (result.requests as Record<string, number>).total,
		throughputPerSecond: (result.requests as Record<string, number>).average,
		latencyMs: { p50: q(50), p95: q(95), p99: q(99), max: samples[samples.length - 1] ?? NaN },
		errors: (result.errors as number) + (result.timeouts as number),
		non2xx: result.non2xx as number,
		paths,
		seconds: o.seconds
	};
}
