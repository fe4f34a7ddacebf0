// The analysis worker process: `npm run worker` (npm start launches it beside the web server).
// Runs on its own too, for scale-out: any number of workers may share one database.
import { config } from '../src/lib/server/config';
import { closeDb } from '../src/lib/server/db';
import { startWorker } from '../src/lib/server/jobs/worker';
import { ENGINE_VERSION } from '../src/lib/stability/index';
import { useLocalEnv } from './lib/local-env';

useLocalEnv();

const worker = await startWorker();
const queues = config.workerQueues;
const what = [queues.runs && `analyses (engine ${ENGINE_VERSION})`, queues.packages && 'data packages']
	.filter(Boolean)
	.join(' and ');
console.log(`[worker pid ${process.pid}] running ${what}`);

let stopping = false;
async function shutdown(signal: string) {
	if (stopping) return;
	stopping = true;
	console.log(`[worker pid ${process.pid}] ${signal}: finishing the current run`);
	await worker.stop();
	await closeDb();
	process.exit(0);
}
process.on('SIGTERM', () => void shutdown('SIGTERM'));
process.on('SIGINT', () => void shutdown('SIGINT'));
await worker.done;
