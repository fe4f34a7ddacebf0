// Child process for the reference run: reads one JSON job per line on stdin ({ key, model, check }), runs
// the engine through its public entry point (analyzeCase, as scripts/analyze.ts does) and writes one JSON
// line per job ({ key, ms, result } or { key, ms, error }). A separate process, so the test can stop a
// check that exceeds its time budget and carry on with the next one.
import { createInterface } from 'node:readline';
import { analyzeCase } from '../../src/lib/stability/index';

const lines = createInterface({ input: process.stdin, crlfDelay: Infinity });
lines.on('line', (line) => {
	if (!line.trim()) return;
	const job = JSON.parse(line) as { key: string; model: unknown; check: unknown };
	const t0 = performance.now();
	let out: Record<string, unknown>;
	try {
		const { results } = analyzeCase({ model: job.model, checks: [job.check] });
		out = { key: job.key, ms: performance.now() - t0, result: results[0] };
	} catch (e) {
		out = { key: job.key, ms: performance.now() - t0, error: (e as Error).message ?? String(e) };
	}
	process.stdout.write(JSON.stringify(out) + '\n');
});
