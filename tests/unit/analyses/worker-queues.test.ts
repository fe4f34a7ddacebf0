import { afterEach, describe, expect, it } from 'vitest';
import { config } from '../../../src/lib/server/config';

// LW_WORKER_QUEUES: which loops a worker process runs. Anything but the two queue names is refused
// with the variable's name, so a typing error never leaves a deployment without a package builder.
const saved = { ...process.env };
afterEach(() => {
	process.env = { ...saved };
});

describe('worker queues', () => {
	it('takes both kinds of job unless told otherwise', () => {
		delete process.env.LW_WORKER_QUEUES;
		expect(config.workerQueues).toEqual({ runs: true, packages: true });
		process.env.LW_WORKER_QUEUES = '';
		expect(config.workerQueues).toEqual({ runs: true, packages: true });
	});

	it('runs only the listed loops', () => {
		process.env.LW_WORKER_QUEUES = 'runs';
		expect(config.workerQueues).toEqual({ runs: true, packages: false });
		process.env.LW_WORKER_QUEUES = ' packages ';
		expect(config.workerQueues).toEqual({ runs: false, packages: true });
		process.env.LW_WORKER_QUEUES = 'packages,runs';
		expect(config.workerQueues).toEqual({ runs: true, packages: true });
	});

	it('refuses an unknown name, naming the variable', () => {
		for (const v of ['run', 'runs,,packages', 'mail']) {
			process.env.LW_WORKER_QUEUES = v;
			expect(() => config.workerQueues, v).toThrow(/LW_WORKER_QUEUES/);
		}
	});
});
