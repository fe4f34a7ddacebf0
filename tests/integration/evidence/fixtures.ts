import { ListObjectsV2Command, S3Client } from '@aws-sdk/client-s3';
import { createHash } from 'node:crypto';
import { deflateSync } from 'node:zlib';
import { testDb, unique } from '../../factories';
import { Client } from '../../helpers/http';

// Rows and helpers the evidence tests need. Requirements, specifications and models are written straight
// to the test database in the shape of migrations/20261201190000_requirements-models-analyses.ts.

export async function createRequirement(
	projectId: number,
	opts: { identifier?: string; title?: string; methods?: string[] } = {}
) {
	const db = testDb();
	const number = Math.floor(Math.random() * 1e9);
	const identifier = opts.identifier ?? unique('REQ-').toUpperCase();
	const [r] = await db('requirements').insert({ project_id: projectId, number, identifier }).returning('*');
	await db('requirement_revisions').insert({
		requirement_id: r.id,
		revision: 1,
		title: opts.title ?? `Requirement ${identifier}`,
		statement: 'The loop shall remain absolutely stable for every actuator gain in the sector.',
		level: 'loop',
		assurance_level: 'B',
		methods: opts.methods ?? ['analysis', 'test'],
		status: 'draft',
		content_hash: createHash('sha256').update(identifier).digest('hex')
	});
	return { id: Number(r.id), identifier };
}

/** A model with one version (operating points as given) and a specification on the requirement. */
export async function attachSpec(
	projectId: number,
	requirementId: number,
	check: unknown,
	operatingPoints: { label: string; model: unknown }[]
) {
	const db = testDb();
	const [m] = await db('models')
		.insert({ project_id: projectId, name: unique('model-'), latest_version: 1 })
		.returning('*');
	const content = { operatingPoints };
	const [mv] = await db('model_versions')
		.insert({
			model_id: m.id,
			version: 1,
			content: JSON.stringify(content),
			content_hash: createHash('sha256').update(JSON.stringify(content)).digest('hex')
		})
		.returning('*');
	const [s] = await db('stability_specs')
		.insert({
			requirement_id: requirementId,
			version: 1,
			check: JSON.stringify(check),
			model_id: m.id,
			content_hash: createHash('sha256').update(JSON.stringify(check)).digest('hex')
		})
		.returning('*');
	await db('requirements').where({ id: requirementId }).update({ current_spec_id: s.id });
	return { modelId: Number(m.id), modelVersionId: Number(mv.id), specId: Number(s.id) };
}

let s3: S3Client | undefined;
/** The test's own client of the object-storage stand-in (same settings as the app's). */
export function testS3(): S3Client {
	s3 ??= new S3Client({
		region: 'us-east-1',
		endpoint: process.env.S3_ENDPOINT,
		forcePathStyle: true,
		requestChecksumCalculation: 'WHEN_REQUIRED',
		responseChecksumValidation: 'WHEN_REQUIRED',
		credentials: {
			accessKeyId: process.env.S3_ACCESS_KEY_ID!,
			secretAccessKey: process.env.S3_SECRET_ACCESS_KEY!
		}
	});
	return s3;
}

export async function objectsUnder(prefix: string): Promise<string[]> {
	const r = await testS3().send(new ListObjectsV2Command({ Bucket: process.env.S3_BUCKET!, Prefix: prefix }));
	return (r.Contents ?? []).map((o) => o.Key!);
}

export function sha256(b: Uint8Array | string): string {
	return createHash('sha256').update(b).digest('hex');
}

/** Printable text of exactly n bytes (lines of hex digits), different on every call. */
export function textOfSize(n: number): Buffer {
	const seed = createHash('sha256').update(unique('seed')).digest('hex');
	const line = Buffer.from((seed + seed).slice(0, 63) + '\n');
	const out = Buffer.alloc(n);
	for (let i = 0; i < n; i += line.length) line.copy(out, i, 0, Math.min(line.length, n - i));
	return out;
}

export function evidenceForm(
	fields: Record<string, string>,
	file: { name: string; bytes: Uint8Array; type?: string } | null
) {
	const fd = new FormData();
	for (const [k, v] of Object.entries(fields)) fd.set(k, v);
	if (file)
		fd.set(
			'file',
			new Blob([new Uint8Array(file.bytes)], { type: file.type ?? 'application/octet-stream' }),
			file.name
		);
	return fd;
}

export function postForm(client: Client, path: string, fd: FormData) {
	return client.request(path, { method: 'POST', headers: { accept: 'application/json' }, body: fd });
}

export async function evidenceRowsTitled(title: string): Promise<number> {
	const r = await testDb()('evidence_files').where({ title }).count<{ count: number }[]>('* as count');
	return Number(r[0].count);
}

/** Poll until `probe` is true or the time is up (server-side clean-up after a failed upload is asynchronous). */
export async function eventually(probe: () => Promise<boolean>, ms = 10_000): Promise<boolean> {
	const end = Date.now() + ms;
	while (Date.now() < end) {
		if (await probe()) return true;
		await new Promise((r) => setTimeout(r, 200));
	}
	return probe();
}

/** A valid 1x1 PNG (PNG specification, ISO/IEC 15948: signature, IHDR, IDAT, IEND with CRC-32). */
export function tinyPng(): Buffer {
	const crcTable = Array.from({ length: 256 }, (_, n) => {
		let c = n;
		for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
		return c >>> 0;
	});
	const crc = (b: Buffer) => {
		let c = 0xffffffff;
		for (const x of b) c = crcTable[(c ^ x) & 0xff] ^ (c >>> 8);
		return (c ^ 0xffffffff) >>> 0;
	};
	const chunk = (type: string, data: Buffer) => {
		const len = Buffer.alloc(4);
		len.writeUInt32BE(data.length);
		const td = Buffer.concat([Buffer.from(type, 'ascii'), data]);
		const c = Buffer.alloc(4);
		c.writeUInt32BE(crc(td));
		return Buffer.concat([len, td, c]);
	};
	const ihdr = Buffer.alloc(13);
	ihdr.writeUInt32BE(1, 0);
	ihdr.writeUInt32BE(1, 4);
	ihdr[8] = 8; // bit depth
	ihdr[9] = 2; // truecolour
	return Buffer.concat([
		Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
		chunk('IHDR', ihdr),
		chunk('IDAT', deflateSync(Buffer.from([0, 0xb7, 0x79, 0x1f]))),
		chunk('IEND', Buffer.alloc(0))
	]);
}
