import busboy from 'busboy';
import { createHash, randomUUID } from 'node:crypto';
import { PassThrough, Readable } from 'node:stream';
import type { ReadableStream as WebReadableStream } from 'node:stream/web';
import { ServiceError } from '../errors';
import { type ObjectStore, isStorageUnavailable } from '../storage';
import {
	ACCEPTED,
	type FileKind,
	FileKindError,
	SNIFF_BYTES,
	TEXT_KINDS,
	TextChecker,
	decideKind
} from './file-kinds';

// Receives a multipart/form-data request and streams its `file` part to the object store while it
// arrives: the SHA-256 and the size are computed on the way, the type is decided from the first bytes
// before anything is stored, and nothing larger than a part of the multipart upload is held in memory.
// Any failure (too large, wrong type, client gone, store down) removes what was stored, so the caller
// either gets a stored object or an error and no object.

export const STORAGE_DOWN =
	'The evidence store is unavailable right now; nothing was stored. Try again shortly.';

/** Text files up to this size are also kept in memory, to be parsed as a measured frequency response. */
export const TEXT_COPY_BYTES = 8 * 1024 * 1024;

export interface StoredUpload {
	storageKey: string;
	originalName: string;
	kind: FileKind;
	contentType: string;
	size: number;
	sha256: string;
	/** The file as text, for CSV/TXT files up to TEXT_COPY_BYTES; null otherwise. */
	text: string | null;
}

export interface ReceivedForm {
	fields: Record<string, string>;
	file: StoredUpload | null;
}

export function formatBytes(n: number): string {
	if (n >= 1024 * 1024 && n % (1024 * 1024) === 0) return `${n / (1024 * 1024)} MiB (${n} bytes)`;
	if (n >= 1024 * 1024) return `${(n / (1024 * 1024)).toFixed(1)} MiB (${n} bytes)`;
	return `${n} bytes`;
}

/** A storage-key-safe form of a file name; the name as given is kept separately for display. */
export function sanitiseFileName(name: string): string {
	const base = name.split(/[\\/]/).pop() ?? '';
	const clean = base
		.normalize('NFKD')
		.replace(/[\u0300-\u036f]/g, '')
		.replace(/[^A-Za-z0-9._-]+/g, '_')
		.replace(/_+/g, '_')
		.replace(/^[._-]+/, '');
	return (clean.length > 100 ? clean.slice(-100) : clean) || 'file';
}

class UploadAborted extends Error {
	constructor() {
		super('The upload was interrupted before the file was complete.');
	}
}

function tooLarge(maxBytes: number) {
	return new ServiceError(413, `The file is larger than the limit of ${formatBytes(maxBytes)}.`, {
		file: `Files may be at most ${formatBytes(maxBytes)}.`
	});
}

function toServiceError(e: unknown): unknown {
	if (e instanceof ServiceError) return e;
	if (e instanceof FileKindError) return new ServiceError(415, e.message, { file: e.message });
	if (isStorageUnavailable(e)) return new ServiceError(503, STORAGE_DOWN);
	return e;
}

/**
 * Read the multipart body of a request. Fields come back as strings; the part named `file` is stored
 * under `${keyPrefix}/<uuid>/<sanitised name>`. Throws a ServiceError (400, 413, 415, 503) after removing
 * anything stored; a client that goes away mid-body gets no answer and leaves nothing.
 */
export async function receiveMultipart(opts: {
	headers: Headers;
	body: ReadableStream<Uint8Array> | null;
	store: ObjectStore;
	keyPrefix: string;
	maxBytes: number;
}): Promise<ReceivedForm> {
	const type = opts.headers.get('content-type') ?? '';
	if (!type.toLowerCase().startsWith('multipart/form-data') || !opts.body) {
		throw new ServiceError(
			415,
			'Send the evidence as multipart/form-data with the file in a part named "file".',
			{
				file: 'Choose a file to upload.'
			}
		);
	}
	let bb: busboy.Busboy;
	try {
		bb = busboy({
			headers: { 'content-type': type },
			// Browsers send the file name as UTF-8 bytes; busboy's default would read them as Latin-1.
			defParamCharset: 'utf8',
			limits: { files: 1, fields: 40, fieldSize: 64 * 1024, parts: 50 }
		});
	} catch (e) {
		throw new ServiceError(400, `The multipart body cannot be read: ${(e as Error).message}`);
	}

	const fields: Record<string, string> = {};
	// Assigned in the parser's callbacks.
	let fileTask = null as Promise<StoredUpload> | null;
	let fileSeen = false;
	const source = Readable.fromWeb(opts.body as unknown as WebReadableStream<Uint8Array>);
	// After a failure the rest of the body is read and dropped, so the client sees our answer rather
	// than a reset connection; past this budget the connection is cut instead.
	const drainBudget = opts.maxBytes + 256 * 1024 * 1024;
	let received = 0;

	bb.on('field', (name, value) => {
		fields[name] = value;
	});
	bb.on('file', (name, stream, info) => {
		if (name !== 'file' || fileSeen) {
			stream.resume();
			return;
		}
		fileSeen = true;
		// The in-memory text copy is only for a measured frequency response; when the form already said
		// another kind (our forms send the fields before the file), none is kept.
		const wantCopy = () => fields.kind === undefined || fields.kind === 'frequency-response';
		fileTask = storeFile(stream, info.filename ?? '', { ...opts, wantCopy });
		// Settled later; avoid an unhandled rejection in between.
		fileTask.catch(() => {});
	});

	const parsed = new Promise<void>((resolve, reject) => {
		bb.on('close', resolve);
		bb.on('error', (e: Error) =>
			reject(new ServiceError(400, `The multipart body cannot be read: ${e.message}`))
		);
		source.on('data', (chunk: Buffer) => {
			received += chunk.length;
			if (received > drainBudget) source.destroy(tooLarge(opts.maxBytes));
		});
		source.on('error', (e: Error & { status?: number }) => {
			// The adapter's own body limit surfaces as a 413 stream error.
			const err =
				e.status === 413 || e instanceof ServiceError ? tooLarge(opts.maxBytes) : new UploadAborted();
			bb.destroy(err);
			reject(err);
		});
		source.pipe(bb);
	});

	let parseError: unknown = null;
	try {
		await parsed;
	} catch (e) {
		parseError = e;
	}
	let file = null as StoredUpload | null;
	if (fileTask) {
		try {
			file = await fileTask;
		} catch (e) {
			throw toServiceError(e);
		}
	}
	if (parseError) {
		if (file) await opts.store.remove(file.storageKey).catch(() => {});
		throw parseError;
	}
	return { fields, file };
}

function storeFile(
	file: Readable,
	originalName: string,
	opts: { store: ObjectStore; keyPrefix: string; maxBytes: number; wantCopy: () => boolean }
): Promise<StoredUpload> {
	const storageKey = `${opts.keyPrefix}/${randomUUID()}/${sanitiseFileName(originalName)}`;
	const hash = createHash('sha256');
	const out = new PassThrough({ highWaterMark: 256 * 1024 });
	// Errors of the pass-through are ours (fail() destroys it) or reach us through the upload's promise.
	out.on('error', () => {});
	const abort = new AbortController();
	let size = 0;
	let head: Buffer[] = [];
	let headLength = 0;
	let kind: FileKind | null = null;
	let text: TextChecker | null = null;
	let copy: Buffer[] | null = null;
	let copyLength = 0;
	let failure: unknown = null;
	let put: Promise<void> | null = null;
	let deciding = false;
	let ended = false;

	return new Promise<StoredUpload>((resolve, reject) => {
		const settleFailure = async (e: unknown) => {
			// Let an upload in flight finish failing, then remove whatever may have been stored.
			if (put) await put.catch(() => {});
			await opts.store.remove(storageKey).catch(() => {});
			reject(e);
		};
		const fail = (e: unknown) => {
			if (failure) return;
			failure = e;
			abort.abort();
			out.destroy(e instanceof Error ? e : new Error(String(e)));
			// Keep reading (and dropping) the rest of the part so the form parser can finish.
			file.resume();
			void settleFailure(e);
		};
		const forward = (chunk: Buffer) => {
			if (failure) return;
			if (!out.write(chunk)) {
				file.pause();
				out.once('drain', () => {
					if (!failure) file.resume();
				});
			}
		};
		const finish = () => {
			if (failure) return;
			try {
				text?.end();
			} catch (e) {
				fail(e);
				return;
			}
			if (size === 0) {
				fail(new ServiceError(400, 'The file is empty.', { file: 'The file is empty.' }));
				return;
			}
			out.end();
			put!.then(
				() => {
					if (failure) return;
					resolve({
						storageKey,
						originalName,
						kind: kind!,
						contentType: ACCEPTED[kind!],
						size,
						sha256: hash.digest('hex'),
						text: copy
							? Buffer.concat(copy)
									.toString('utf8')
									.replace(/^\uFEFF/, '')
							: null
					});
				},
				(e) => fail(e)
			);
		};
		const decide = () => {
			deciding = true;
			file.pause();
			const sample = Buffer.concat(head);
			decideKind(originalName, sample.subarray(0, SNIFF_BYTES)).then(
				(k) => {
					deciding = false;
					if (failure) return;
					kind = k;
					if (TEXT_KINDS.includes(k)) {
						text = new TextChecker();
						if (k !== 'json' && opts.wantCopy()) copy = [];
					}
					put = opts.store.put(storageKey, out, ACCEPTED[k], abort.signal);
					put.catch((e) => fail(e));
					head = [];
					try {
						take(sample);
					} catch (e) {
						fail(e);
						return;
					}
					if (ended) finish();
					else file.resume();
				},
				(e) => fail(e)
			);
		};
		// Everything after the type is decided: text check, in-memory copy for small text, forward.
		const take = (chunk: Buffer) => {
			text?.push(chunk);
			if (copy) {
				copyLength += chunk.length;
				if (copyLength <= TEXT_COPY_BYTES) copy.push(chunk);
				else copy = null;
			}
			forward(chunk);
		};

		file.on('data', (chunk: Buffer) => {
			if (failure) return;
			size += chunk.length;
			if (size > opts.maxBytes) {
				fail(tooLarge(opts.maxBytes));
				return;
			}
			hash.update(chunk);
			if (kind === null) {
				head.push(chunk);
				headLength += chunk.length;
				if (headLength >= SNIFF_BYTES && !deciding) decide();
				return;
			}
			try {
				take(chunk);
			} catch (e) {
				fail(e);
			}
		});
		file.on('end', () => {
			ended = true;
			if (failure) return;
			if (kind === null) {
				if (!deciding) {
					if (size === 0) {
						fail(new ServiceError(400, 'The file is empty.', { file: 'The file is empty.' }));
						return;
					}
					decide();
				}
				return;
			}
			finish();
		});
		file.on('error', () => fail(new UploadAborted()));
	});
}
