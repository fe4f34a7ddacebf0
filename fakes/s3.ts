import { mkdir } from 'node:fs/promises';
import S3rver from 's3rver';

// A local S3-compatible object store (s3rver) on loopback, for the AWS SDK v3 client.
// Client settings that it needs are in src/lib/server/storage.ts (path-style, checksums only when required).
export async function startS3Fake(opts: { port: number; dir: string; buckets: string[] }): Promise<S3rver> {
	await mkdir(opts.dir, { recursive: true });
	const server = new S3rver({
		port: opts.port,
		address: '127.0.0.1',
		silent: true,
		directory: opts.dir,
		configureBuckets: opts.buckets.map((name) => ({ name, configs: [] }))
	});
	await server.run();
	return server;
}
