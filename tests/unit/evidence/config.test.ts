import { afterEach, describe, expect, it } from 'vitest';
import { config } from '../../../src/lib/server/config';

// The evidence limit and storage settings as read from the environment. npm test runs the app with
// EVIDENCE_MAX_BYTES = 12 MiB; this checks the default a deployment gets without it.
const saved = { ...process.env };
afterEach(() => {
	process.env = { ...saved };
});

describe('evidence configuration', () => {
	it('defaults to a 200 MiB limit', () => {
		delete process.env.EVIDENCE_MAX_BYTES;
		expect(config.evidenceMaxBytes).toBe(200 * 1024 * 1024);
		process.env.EVIDENCE_MAX_BYTES = '5000';
		expect(config.evidenceMaxBytes).toBe(5000);
	});

	it('uses path-style addressing by default only with an explicit endpoint', () => {
		delete process.env.S3_FORCE_PATH_STYLE;
		delete process.env.S3_REGION;
		process.env.S3_ENDPOINT = 'http://127.0.0.1:4569';
		expect(config.storage).toMatchObject({
			endpoint: 'http://127.0.0.1:4569',
			region: 'us-east-1',
			forcePathStyle: true
		});
		delete process.env.S3_ENDPOINT;
		expect(config.storage.forcePathStyle).toBe(false);
		process.env.S3_FORCE_PATH_STYLE = 'true';
		expect(config.storage.forcePathStyle).toBe(true);
	});
});
