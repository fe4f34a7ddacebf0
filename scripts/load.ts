// npm run load — 50 connections for 30 s against the running app (npm start), signed in as the demo
// certifier, over the trace-matrix API, a requirement page and the analysis API; measured after 5 s of
// the same load that are not counted (LOAD_WARMUP_SECONDS=0 measures a cold start).
//   LOAD_BASE_URL (http://127.0.0.1:4173)  LOAD_SECONDS (30)  LOAD_CONNECTIONS (50)  LOAD_WARMUP_SECONDS (5)
//   LOAD_EMAIL / LOAD_PASSWORD (the demo certifier)  LOAD_PROJECT (VX7)
import { runLoad } from './lib/load';
import { useLocalEnv } from './lib/local-env';

// Against the running app over HTTP: no database of its own.
useLocalEnv('none');

const r = await runLoad({
	baseUrl: process.env.LOAD_BASE_URL ?? 'http://127.0.0.1:4173',
	email: process.env.LOAD_EMAIL ?? 'certifier@demo.loopwarden.test',
	password: process.env.LOAD_PASSWORD ?? 'loopwarden-demo',
	projectKey: process.env.LOAD_PROJECT ?? 'VX7',
	seconds: Number(process.env.LOAD_SECONDS ?? 30),
	connections: Number(process.env.LOAD_CONNECTIONS ?? 50),
	warmupSeconds: Number(process.env.LOAD_WARMUP_SECONDS ?? 5)
});
console.log(`paths: ${r.paths.join(', ')}`);
console.log(
	`warm-up ${Number(process.env.LOAD_WARMUP_SECONDS ?? 5)} s (not counted), then ${r.seconds} s measured`
);
console.log(`requests ${r.requests}, throughput ${r.throughputPerSecond.toFixed(0)}/s`);
console.log(
	`latency p50 ${r.latencyMs.p50} ms, p95 ${r.latencyMs.p95} ms, p99 ${r.latencyMs.p99} ms, max ${r.latencyMs.max} ms`
);
console.log(`errors ${r.errors}, non-2xx ${r.non2xx}`);
const ok = r.errors === 0 && r.non2xx === 0 && r.latencyMs.p95 <= 300;
console.log(ok ? 'target met (0 errors, p95 <= 300 ms)' : 'target NOT met (0 errors, p95 <= 300 ms)');
process.exit(ok ? 0 : 1);
