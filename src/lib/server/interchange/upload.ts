import busboy from 'busboy';
import { Readable } from 'node:stream';
import type { ReadableStream as WebReadableStream } from 'node:stream/web';
import { formatBytes } from '../evidence/upload';
import { ServiceError } from '../errors';

// An import's multipart body: the file part held in memory (an import reads it whole), the other
// parts as strings. Over the limit is a 413 before anything is stored.

export interface ImportUpload {
	fields: Record<string, string>;
	file: { name: string; bytes: Buffer } | null;
}

const ALLOWED = new Set(['file', 'format', 'mapping']);

export async function receiveImport(
	headers: Headers,
	body: ReadableStream<Uint8Array> | null,
	maxBytes: number
): Promise<ImportUpload> {
	const type = headers.get('content-type') ?? '';
	if (!type.toLowerCase().startsWith('multipart/form-data') || !body) {
		throw new ServiceError(
			415,
			'Send the import as multipart/form-data with the file in a part named "file".',
			{
				file: 'Choose a file to import.'
			}
		);
	}
	const tooLarge = () =>
		new ServiceError(
			413,
			`The file is larger than the import limit of ${formatBytes(maxBytes)}; nothing was stored.`,
			{
				file: `At most ${formatBytes(maxBytes)}.`
			}
		);
	if (Number(headers.get('content-length') ?? 0) > maxBytes + 1024 * 1024) throw tooLarge();
	const bb = busboy({
		headers: { 'content-type': type },
		defParamCharset: 'utf8',
		limits: { files: 1, fields: 10, fieldSize: 4 * 1024 * 1024, fileSize: maxBytes }
	});
	const fields: Record<string, string> = {};
	let file: ImportUpload['file'] = null;
	let failure: ServiceError | null = null;
	const done = new Promise<void>((resolve, reject) => {
		bb.on('field', (name, value) => {
			if (!ALLOWED.has(name))
				failure ??= new ServiceError(400, `Unknown field "${name}": send file, format and mapping only.`, {
					[name]: 'Unknown field.'
				});
			fields[name] = value;
		});
		bb.on('file', (name, stream, info) => {
			if (name !== 'file') {
				failure ??= new ServiceError(400, `Unknown file part "${name}": send the file as "file".`, {
					[name]: 'Unknown field.'
				});
				stream.resume();
				return;
			}
			const chunks: Buffer[] = [];
			stream.on('data', (c: Buffer) => chunks.push(c));
			stream.on('limit', () => {
				failure ??= tooLarge();
				chunks.length = 0;
			});
			stream.on('end', () => {
				if (!failure) file = { name: info.filename ?? '', bytes: Buffer.concat(chunks) };
			});
		});
		bb.on('close', resolve);
		bb.on('error', (e: Error) =>
			reject(new ServiceError(400, `The multipart body cannot be read: ${e.message}`))
		);
	});
	Readable.fromWeb(body as unknown as WebReadableStream<Uint8Array>).pipe(bb);
	await done;
	if (failure) throw failure;
	return { fields, file };
}
