// Bench section: the data package of a 500-requirement baseline with plots (issue 16; target: the report
// and the archive in <= 60 s, <= 400 MB peak memory of the process that builds them). The build runs in
// a child process with the heap cap the worker gives a package build (jobs/worker.ts), on generated
// content (tests/factories/package-content.ts: every run computed by the engine, with curves; one
// accepted 64 KiB evidence file per four requirements). Measured: report (layout pass + writing pass)
// and archive (ZIP to a local file). Not in the figure: reading the manifest and rows from PostgreSQL and
// the upload to object storage, which the worker adds.
//   BENCH_REQUIREMENTS=500 tsx scripts/bench/package.ts
import { execFileSync } from 'node:child_process';
import { loadavg } from 'node:os';
import { ROOT, type BenchResult } from './common';

export async function packageSection(): Promise<BenchResult> {
	const n = Number(process.env.BENCH_REQUIREMENTS ?? 500);
	const out = execFileSync(
		process.execPath,
		['--max-old-space-size=256', '--import', 'tsx', 'scripts/bench/package-child.ts', String(n)],
		{ cwd: ROOT, encoding: 'utf8', maxBuffer: 16 * 1024 * 1024 }
	);
	const r = JSON.parse(out.trim().split('\n').at(-1)!) as Record<string, number>;
	const seconds = (r.reportMs + r.archiveMs) / 1000;
	return {
		name: `data package, ${n} requirements with plots`,
		figure: `${seconds.toFixed(1)} s (CPU ${(r.cpuMs / 1000).toFixed(1)} s), peak ${r.peakRssMB} MB`,
		target: '<= 60 s, <= 400 MB',
		ok: seconds <= 60 && r.peakRssMB <= 400,
		details: { ...r, loadavg1: Number(loadavg()[0].toFixed(2)) }
	};
}

if (import.meta.url === `file://${process.argv[1]}`) {
	console.log(await packageSection());
}
