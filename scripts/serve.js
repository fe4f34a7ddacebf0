// Serves the built app (adapter-node) from several processes sharing one port (node:cluster), so that
// page rendering uses every core. WEB_CONCURRENCY sets the number (default: the cores, at most 4);
// 1 runs the app in this process. BUILD_DIR picks the build (default ./build).
// SIGINT/SIGTERM are passed to the workers, which finish their requests and close their database pools.
// A worker that dies while serving is replaced; one that cannot start (the port is taken, the build is
// broken) stops the whole server with exit code 1 instead of being restarted in a loop.
import cluster from 'node:cluster';
import { writeFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

const dir = resolve(process.env.BUILD_DIR ?? 'build');
const requested = Number(process.env.WEB_CONCURRENCY);
const count = Number.isInteger(requested) && requested > 0 ? requested : Math.min(availableParallelism(), 4);

if (count === 1 || !cluster.isPrimary) {
	if (!cluster.isPrimary) {
		// Each worker would print adapter-node's "Listening on ..." line, one by one, in between
		// whatever else the terminal shows; the primary prints it once for all of them (below).
		const log = console.log;
		console.log = (...args) => {
			if (typeof args[0] === 'string' && args[0].startsWith('Listening on ')) return;
			log(...args);
		};
	}
	await import(pathToFileURL(resolve(dir, 'index.js')).href);
} else {
	let stopping = false;
	let exitCode = 0;
	const listening = new Set();
	const restarts = [];

	const stop = (signal, code = 0) => {
		exitCode = Math.max(exitCode, code);
		if (stopping) return;
		stopping = true;
		for (const w of Object.values(cluster.workers ?? {})) w?.process.kill(signal);
		if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(exitCode);
		// A worker stuck on a request does not keep the server up for ever.
		setTimeout(() => process.exit(exitCode), 15_000).unref();
	};

	let announced = false;
	cluster.on('listening', (worker, address) => {
		listening.add(worker.id);
		if (announced || listening.size < count) return;
		announced = true;
		const host = address.address ?? '0.0.0.0';
		console.log(`Listening on http://${host}:${address.port} (${count} processes)`);
		// npm start prints its banner after this line (SERVE_READY_FILE), so the two never interleave.
		if (process.env.SERVE_READY_FILE) writeFileSync(process.env.SERVE_READY_FILE, `${address.port}\n`);
	});
	cluster.on('exit', (worker, code, signal) => {
		const served = listening.delete(worker.id);
		if (stopping) {
			if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(exitCode);
			return;
		}
		if (!served) {
			console.error(`[serve] a worker could not start (exit ${signal ?? code}); stopping`);
			stop('SIGTERM', 1);
			return;
		}
		const now = Date.now();
		restarts.push(now);
		while (restarts.length && restarts[0] < now - 60_000) restarts.shift();
		if (restarts.length > 5) {
			console.error('[serve] workers keep dying (more than 5 in a minute); stopping');
			stop('SIGTERM', 1);
			return;
		}
		console.error(`[serve] worker ${worker.process.pid} exited (${signal ?? code}); starting another`);
		setTimeout(() => stopping || cluster.fork(), 500);
	});

	for (let i = 0; i < count; i++) cluster.fork();
	process.on('SIGINT', () => stop('SIGINT'));
	process.on('SIGTERM', () => stop('SIGTERM'));
}
