// Serves the built app (adapter-node) from several processes sharing one port (node:cluster), so that
// page rendering uses every core. WEB_CONCURRENCY sets the number (default: the cores, at most 4);
// 1 runs the app in this process. BUILD_DIR picks the build (default ./build).
// SIGINT/SIGTERM are passed to the workers, which finish their requests and close their database pools.
import cluster from 'node:cluster';
import { availableParallelism } from 'node:os';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

const dir = resolve(process.env.BUILD_DIR ?? 'build');
const requested = Number(process.env.WEB_CONCURRENCY);
const count = Number.isInteger(requested) && requested > 0 ? requested : Math.min(availableParallelism(), 4);

if (count === 1 || !cluster.isPrimary) {
	await import(pathToFileURL(resolve(dir, 'index.js')).href);
} else {
	let stopping = false;
	const fork = () => cluster.fork();
	for (let i = 0; i < count; i++) fork();
	cluster.on('exit', (worker, code, signal) => {
		if (stopping) {
			if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(0);
			return;
		}
		console.error(`[serve] worker ${worker.process.pid} exited (${signal ?? code}); starting another`);
		setTimeout(fork, 500);
	});
	const stop = (signal) => {
		if (stopping) return;
		stopping = true;
		for (const w of Object.values(cluster.workers ?? {})) w?.process.kill(signal);
		// A worker stuck on a request does not keep the server up for ever.
		setTimeout(() => process.exit(0), 15_000).unref();
	};
	process.on('SIGINT', () => stop('SIGINT'));
	process.on('SIGTERM', () => stop('SIGTERM'));
}
