import { createHash } from 'node:crypto';
import type { Readable } from 'node:stream';
import { type Actor, recordEvent } from '../audit';
import { db } from '../db';
import { ObjectNotFoundError, type ObjectStore, objectStore } from '../storage';
import { fileOf } from './read';
import { type ProjectRef, storageError } from './revision';

// The integrity check of a stored evidence file: its SHA-256 recomputed from the object store.

async function hashStream(body: Readable): Promise<{ sha256: string; size: number }> {
	const h = createHash('sha256');
	let size = 0;
	for await (const chunk of body) {
		h.update(chunk as Buffer);
		size += (chunk as Buffer).length;
	}
	return { sha256: h.digest('hex'), size };
}

export interface IntegrityResult {
	revision: number;
	expected: string;
	actual: string | null;
	expectedSize: number;
	actualSize: number | null;
	match: boolean;
	checkedAt: string;
	message: string;
}

/** Re-read the stored object and recompute its SHA-256 (FIPS 180-4) against the recorded one. */
export async function checkIntegrity(input: {
	evidenceId: number;
	revision?: number;
	project: ProjectRef;
	actor: Actor;
	store?: ObjectStore;
}): Promise<IntegrityResult> {
	const store = input.store ?? objectStore();
	const file = await fileOf(input.evidenceId, input.revision);
	let actual: { sha256: string; size: number } | null = null;
	try {
		actual = await hashStream((await store.get(file.storage_key)).body);
	} catch (e) {
		if (!(e instanceof ObjectNotFoundError)) storageError(e);
	}
	const match = !!actual && actual.sha256 === file.sha256 && actual.size === Number(file.size_bytes);
	const result: IntegrityResult = {
		revision: file.revision,
		expected: file.sha256,
		actual: actual?.sha256 ?? null,
		expectedSize: Number(file.size_bytes),
		actualSize: actual?.size ?? null,
		match,
		checkedAt: new Date().toISOString(),
		message: match
			? `The stored file matches its recorded SHA-256 (${file.sha256}).`
			: actual
				? `MISMATCH: the stored file's SHA-256 is ${actual.sha256} (${actual.size} bytes), but ${file.sha256} (${file.size_bytes} bytes) was recorded at upload. The file has changed in storage.`
				: 'MISMATCH: the stored file is missing from the evidence store.'
	};
	await db().transaction((trx) =>
		recordEvent(trx, input.actor, {
			projectId: input.project.id,
			action: 'evidence.integrity-check',
			subjectType: 'evidence',
			subjectId: input.evidenceId,
			after: { revision: result.revision, match, expected: result.expected, actual: result.actual }
		})
	);
	return result;
}
