import {
	AbortMultipartUploadCommand,
	CompleteMultipartUploadCommand,
	CreateMultipartUploadCommand,
	DeleteObjectCommand,
	GetObjectCommand,
	HeadBucketCommand,
	HeadObjectCommand,
	PutObjectCommand,
	S3Client,
	UploadPartCommand,
	type S3ClientConfig
} from '@aws-sdk/client-s3';
import type { Readable } from 'node:stream';
import { config } from './config';
import { registerHealthCheck } from './health';

// The object store for evidence files: any S3-compatible service, configured by the environment
// (S3_ENDPOINT, S3_REGION, S3_BUCKET, S3_ACCESS_KEY_ID, S3_SECRET_ACCESS_KEY, S3_FORCE_PATH_STYLE).
// Without an endpoint the SDK's own resolution (AWS) and credential chain apply.

/** Multipart part size: 5 MiB, the smallest part S3 accepts (all but the last). */
const PART_SIZE = 5 * 1024 * 1024;

export interface StorageSettings {
	endpoint?: string;
	region: string;
	bucket: string;
	accessKeyId?: string;
	secretAccessKey?: string;
	forcePathStyle: boolean;
}

/** Thrown when the object store cannot be reached or refuses us; routes answer 503. */
export class StorageUnavailableError extends Error {
	constructor(cause: unknown) {
		super(`The evidence store is unavailable: ${(cause as Error)?.message ?? String(cause)}`);
		this.name = 'StorageUnavailableError';
		this.cause = cause;
	}
}

export class ObjectNotFoundError extends Error {
	constructor(key: string) {
		super(`No object ${key} in the evidence store.`);
		this.name = 'ObjectNotFoundError';
	}
}

function statusOf(e: unknown): number | undefined {
	return (e as { $metadata?: { httpStatusCode?: number } })?.$metadata?.httpStatusCode;
}

/** Network failures, timeouts and 5xx answers mean the store is down, not that we asked wrongly. */
export function isStorageUnavailable(e: unknown): boolean {
	if (e instanceof StorageUnavailableError) return true;
	const err = e as { code?: string; name?: string; message?: string; cause?: unknown } | undefined;
	const code = err?.code ?? (err?.cause as { code?: string } | undefined)?.code ?? '';
	if (
		['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EHOSTUNREACH', 'ENOTFOUND', 'EAI_AGAIN', 'EPIPE'].includes(
			code
		)
	) {
		return true;
	}
	if (err?.name === 'TimeoutError' || err?.name === 'NoSuchBucket') return true;
	const status = statusOf(e);
	return status !== undefined && status >= 500;
}

export class ObjectStore {
	readonly client: S3Client;
	constructor(readonly settings: StorageSettings) {
		const cfg: S3ClientConfig = {
			region: settings.region,
			forcePathStyle: settings.forcePathStyle,
			// Without these the SDK sends streamed bodies with aws-chunked framing and some S3-compatible
			// stores keep the framing as content (silent corruption); see STACK.md.
			requestChecksumCalculation: 'WHEN_REQUIRED',
			responseChecksumValidation: 'WHEN_REQUIRED',
			maxAttempts: 2
		};
		if (settings.endpoint) cfg.endpoint = settings.endpoint;
		if (settings.accessKeyId && settings.secretAccessKey) {
			cfg.credentials = { accessKeyId: settings.accessKeyId, secretAccessKey: settings.secretAccessKey };
		}
		this.client = new S3Client(cfg);
	}

	get bucket(): string {
		return this.settings.bucket;
	}

	/**
	 * Store a stream under `key`. A body up to one part goes up as one PutObject; a larger one as a
	 * multipart upload of 5 MiB parts (the smallest S3 allows) gathered into two buffers allocated once:
	 * one part is sent while the next is gathered, so memory holds two parts (10 MiB) whatever the file's
	 * size, with nothing left for the garbage collector to catch up with. An error or an abort aborts the
	 * multipart upload.
	 */
	async put(key: string, body: Readable, contentType: string, signal?: AbortSignal): Promise<void> {
		try {
			await this.putParts(key, body, contentType, signal);
		} catch (e) {
			if (isStorageUnavailable(e)) throw new StorageUnavailableError(e);
			throw e;
		}
	}

	private async putParts(key: string, body: Readable, contentType: string, signal?: AbortSignal) {
		const base = { Bucket: this.bucket, Key: key };
		const buffers = [Buffer.allocUnsafe(PART_SIZE), Buffer.allocUnsafe(PART_SIZE)];
		let fill = 0;
		let used = 0;
		let uploadId: string | undefined;
		const parts: { ETag?: string; PartNumber: number }[] = [];
		let inFlight: Promise<void> | null = null;
		const sendPart = async (buf: Buffer, length: number) => {
			if (!uploadId) {
				const r = await this.client.send(
					new CreateMultipartUploadCommand({ ...base, ContentType: contentType }),
					{ abortSignal: signal }
				);
				uploadId = r.UploadId!;
			}
			const PartNumber = parts.length + 1;
			parts.push({ PartNumber });
			const r = await this.client.send(
				new UploadPartCommand({
					...base,
					UploadId: uploadId,
					PartNumber,
					Body: buf.subarray(0, length),
					ContentLength: length
				}),
				{ abortSignal: signal }
			);
			parts[PartNumber - 1].ETag = r.ETag;
		};
		try {
			for await (const chunk of body as AsyncIterable<Buffer>) {
				let at = 0;
				while (at < chunk.length) {
					const n = Math.min(PART_SIZE - used, chunk.length - at);
					chunk.copy(buffers[fill], used, at, at + n);
					used += n;
					at += n;
					if (used === PART_SIZE) {
						// The other buffer is free once its part has been sent.
						await inFlight;
						inFlight = sendPart(buffers[fill], used);
						inFlight.catch(() => {});
						fill = 1 - fill;
						used = 0;
					}
				}
			}
			await inFlight;
			if (!uploadId) {
				await this.client.send(
					new PutObjectCommand({
						...base,
						ContentType: contentType,
						Body: buffers[fill].subarray(0, used),
						ContentLength: used
					}),
					{ abortSignal: signal }
				);
				return;
			}
			if (used > 0) await sendPart(buffers[fill], used);
			await this.client.send(
				new CompleteMultipartUploadCommand({
					...base,
					UploadId: uploadId,
					MultipartUpload: { Parts: parts }
				}),
				{ abortSignal: signal }
			);
		} catch (e) {
			await inFlight?.catch(() => {});
			if (uploadId)
				await this.client
					.send(new AbortMultipartUploadCommand({ ...base, UploadId: uploadId }))
					.catch(() => {});
			throw e;
		}
	}

	/** The object's bytes as a Node stream. */
	async get(
		key: string
	): Promise<{ body: Readable; size: number | undefined; contentType: string | undefined }> {
		try {
			const r = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: key }));
			return { body: r.Body as Readable, size: r.ContentLength, contentType: r.ContentType };
		} catch (e) {
			if ((e as { name?: string }).name === 'NoSuchKey' || statusOf(e) === 404)
				throw new ObjectNotFoundError(key);
			if (isStorageUnavailable(e)) throw new StorageUnavailableError(e);
			throw e;
		}
	}

	/** Size of the object, or null when there is none. */
	async head(key: string): Promise<number | null> {
		try {
			const r = await this.client.send(new HeadObjectCommand({ Bucket: this.bucket, Key: key }));
			return r.ContentLength ?? 0;
		} catch (e) {
			if ((e as { name?: string }).name === 'NotFound' || statusOf(e) === 404) return null;
			if (isStorageUnavailable(e)) throw new StorageUnavailableError(e);
			throw e;
		}
	}

	/** Remove an object; removing one that is not there is not an error. */
	async remove(key: string): Promise<void> {
		try {
			await this.client.send(new DeleteObjectCommand({ Bucket: this.bucket, Key: key }));
		} catch (e) {
			if (statusOf(e) === 404) return;
			if (isStorageUnavailable(e)) throw new StorageUnavailableError(e);
			throw e;
		}
	}

	/** Health: the bucket exists and our credentials may use it. */
	async check(): Promise<'ok' | string> {
		try {
			await this.client.send(new HeadBucketCommand({ Bucket: this.bucket }));
			return 'ok';
		} catch (e) {
			const status = statusOf(e);
			if (status === 404) return `bucket ${this.bucket} does not exist`;
			if (status === 403) return `access to bucket ${this.bucket} is refused`;
			return `unreachable: ${(e as Error).message || (e as Error).name}`;
		}
	}
}

export function storageSettingsFromEnv(): StorageSettings {
	return config.storage;
}

let instance: ObjectStore | undefined;

/** The object store of the process, from the environment. */
export function objectStore(): ObjectStore {
	instance ??= new ObjectStore(storageSettingsFromEnv());
	return instance;
}

registerHealthCheck('storage', () => objectStore().check());
