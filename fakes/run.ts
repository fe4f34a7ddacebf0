// Starts the local stand-ins for hosted services (mail, object storage) on loopback and stays
// in the foreground until stopped (SIGTERM/SIGINT).
//   FAKE_DIR        where they keep their data (default .data/fakes)
//   FAKE_SMTP_PORT  default 2525
//   FAKE_S3_PORT    default 4569
//   S3_BUCKET       bucket created at start (default loopwarden-evidence)
//   FAKE_OIDC_PORT  default 4599: the identity-provider stand-in; it accepts the app's redirect URI
//                   ORIGIN/auth/callback/oidc (ORIGIN default http://127.0.0.1:4173)
import { join, resolve } from 'node:path';
import { startOidcFake } from './oidc';
import { startS3Fake } from './s3';
import { startSmtpFake } from './smtp';

const dir = resolve(process.env.FAKE_DIR ?? '.data/fakes');
const smtpPort = Number(process.env.FAKE_SMTP_PORT ?? 2525);
const s3Port = Number(process.env.FAKE_S3_PORT ?? 4569);
const bucket = process.env.S3_BUCKET ?? 'loopwarden-evidence';
const oidcPort = Number(process.env.FAKE_OIDC_PORT ?? 4599);
const appOrigin = process.env.ORIGIN ?? 'http://127.0.0.1:4173';
const only = (process.env.FAKES ?? 'smtp,s3,oidc').split(',');

const stops: (() => Promise<void>)[] = [];
if (only.includes('smtp')) {
	const smtp = await startSmtpFake({ port: smtpPort, dir: join(dir, 'mail') });
	stops.push(() => new Promise((r) => smtp.close(() => r())));
	console.log(`[fakes] mail stand-in on smtp://127.0.0.1:${smtpPort} (messages in ${join(dir, 'mail')})`);
}
if (only.includes('s3')) {
	const s3 = await startS3Fake({ port: s3Port, dir: join(dir, 's3'), buckets: [bucket] });
	stops.push(() => s3.close());
	console.log(`[fakes] object-storage stand-in on http://127.0.0.1:${s3Port} (bucket ${bucket})`);
}
if (only.includes('oidc')) {
	const oidc = await startOidcFake({
		port: oidcPort,
		redirectUris: [`${appOrigin}/auth/callback/oidc`, `${appOrigin}/signin/sign/callback`]
	});
	stops.push(() => new Promise((r) => oidc.close(() => r())));
	console.log(`[fakes] identity-provider stand-in on http://127.0.0.1:${oidcPort}`);
}
console.log('[fakes] ready');

async function shutdown() {
	await Promise.allSettled(stops.map((s) => s()));
	process.exit(0);
}
process.on('SIGTERM', shutdown);
process.on('SIGINT', shutdown);
