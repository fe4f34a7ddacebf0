import { createHash } from 'node:crypto';
import type { Db } from './db';

// The one place that writes the audit trail. Services call recordEvent() inside the transaction
// of the change itself, so a change and its audit entry commit or roll back together.

export interface Actor {
	userId?: number | null;
	tokenId?: number | null;
	/** e-mail of the user, "token 12 of a@b", "worker", "system" */
	label: string;
	requestId?: string | null;
}

export const SYSTEM: Actor = { label: 'system' };

export interface AuditEvent {
	projectId?: number | null;
	action: string; // e.g. 'requirement.revise', 'model.publish', 'evidence.review', 'auth.sign-in-failed'
	subjectType: string; // 'requirement', 'model-version', 'evidence', 'user', 'membership', ...
	subjectId?: string | number | null;
	before?: unknown;
	after?: unknown;
}

export const GENESIS = '0'.repeat(64);
// Any constant: every audited transaction takes this lock, so the chain has one order.
const CHAIN_LOCK = 7_431_002;

/** Canonical JSON: object keys sorted, no whitespace; the hash input is stable across runs. */
export function canonical(value: unknown): string {
	if (value === undefined) return 'null';
	if (value === null || typeof value !== 'object') return JSON.stringify(value);
	if (value instanceof Date) return JSON.stringify(value.toISOString());
	if (Array.isArray(value)) return '[' + value.map(canonical).join(',') + ']';
	const entries = Object.entries(value as Record<string, unknown>)
		.filter(([, v]) => v !== undefined)
		.sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
	return '{' + entries.map(([k, v]) => JSON.stringify(k) + ':' + canonical(v)).join(',') + '}';
}

export interface StoredEvent {
	seq: number;
	at: Date | string;
	project_id: number | null;
	actor_user_id: number | null;
	actor_token_id: number | null;
	actor_label: string;
	action: string;
	subject_type: string;
	subject_id: string | null;
	before: unknown;
	after: unknown;
	request_id: string | null;
	prev_hash: string;
	hash: string;
}

/** What the hash covers: everything but seq and the hash itself. */
export function eventHash(prevHash: string, e: Omit<StoredEvent, 'seq' | 'hash' | 'prev_hash'>): string {
	// bigint columns may come back as strings depending on the driver's type parsers: normalise.
	const id = (v: unknown) => (v === null || v === undefined ? null : Number(v));
	const content = canonical({
		at: new Date(e.at).toISOString(),
		project_id: id(e.project_id),
		actor_user_id: id(e.actor_user_id),
		actor_token_id: id(e.actor_token_id),
		actor_label: e.actor_label,
		action: e.action,
		subject_type: e.subject_type,
		subject_id: e.subject_id ?? null,
		before: e.before ?? null,
		after: e.after ?? null,
		request_id: e.request_id ?? null
	});
	return createHash('sha256')
		.update(prevHash + '\n' + content, 'utf8')
		.digest('hex');
}

/**
 * Take the chain's lock now (held to the end of the transaction; recordEvent takes it again for free).
 * A transaction that locks rows before it records an event calls this first, so that it cannot wait
 * for the chain while holding rows that a chain holder (a publish queuing runs) waits for.
 */
export async function lockChain(trx: Db): Promise<void> {
	await trx.raw('select pg_advisory_xact_lock(?)', [CHAIN_LOCK]);
}

/** Append one event in the caller's transaction. */
export async function recordEvent(trx: Db, actor: Actor, event: AuditEvent): Promise<void> {
	await recordEvents(trx, actor, [event]);
}

/**
 * Append several events in the caller's transaction, chained in the order given: one read of the
 * chain's end and one insert however many there are (the worker stores a batch of runs this way).
 */
export async function recordEvents(trx: Db, actor: Actor, events: AuditEvent[]): Promise<void> {
	if (events.length === 0) return;
	await lockChain(trx);
	const last = await trx('audit_events').orderBy('seq', 'desc').first('hash');
	let prev: string = last?.hash ?? GENESIS;
	// Millisecond precision, so the stored value and the hashed value agree exactly.
	const at = new Date(Math.floor(Date.now()));
	const rows = events.map((event) => {
		const row = eventRow(at, actor, event);
		const hash = eventHash(prev, row);
		const stored = {
			...row,
			before: row.before === null ? null : JSON.stringify(row.before),
			after: row.after === null ? null : JSON.stringify(row.after),
			prev_hash: prev,
			hash
		};
		prev = hash;
		return stored;
	});
	// Inserted in array order, so seq follows the chain.
	for (let i = 0; i < rows.length; i += 500) await trx('audit_events').insert(rows.slice(i, i + 500));
}

function eventRow(at: Date, actor: Actor, event: AuditEvent) {
	return {
		at,
		project_id: event.projectId ?? null,
		actor_user_id: actor.userId ?? null,
		actor_token_id: actor.tokenId ?? null,
		actor_label: actor.label,
		action: event.action,
		subject_type: event.subjectType,
		subject_id: event.subjectId == null ? null : String(event.subjectId),
		// JSON round trip: what is stored in jsonb is what was hashed.
		before: event.before === undefined ? null : JSON.parse(canonical(event.before)),
		after: event.after === undefined ? null : JSON.parse(canonical(event.after)),
		request_id: actor.requestId ?? null
	};
}

/** Walk the chain; name the first event whose link or content does not match. */
export async function verifyChain(
	db: Db
): Promise<{ ok: true; count: number } | { ok: false; count: number; brokenAt: number; reason: string }> {
	let prev = GENESIS;
	let count = 0;
	let after = 0;
	for (;;) {
		const rows: StoredEvent[] = await db('audit_events').where('seq', '>', after).orderBy('seq').limit(1000);
		if (rows.length === 0) break;
		for (const r of rows) {
			count++;
			if (r.prev_hash !== prev)
				return { ok: false, count, brokenAt: r.seq, reason: 'its link to the previous event does not match' };
			if (eventHash(prev, r) !== r.hash)
				return { ok: false, count, brokenAt: r.seq, reason: 'its content does not match its hash' };
			prev = r.hash;
			after = r.seq;
		}
	}
	return { ok: true, count };
}

/** An event as a page's history shows it. */
export const eventView = (e: StoredEvent) => ({
	seq: Number(e.seq),
	at: new Date(e.at).toISOString(),
	actor: e.actor_label,
	action: e.action,
	before: e.before,
	after: e.after
});

/** The history of one item, newest first. */
export function historyOf(db: Db, subjectType: string, subjectId: string | number, limit = 200) {
	return db<StoredEvent>('audit_events')
		.where({ subject_type: subjectType, subject_id: String(subjectId) })
		.orderBy('seq', 'desc')
		.limit(limit);
}

/** The actor of a request (session user or API token). */
export function actorOf(locals: App.Locals): Actor {
	const u = locals.user;
	if (!u) return { label: 'anonymous', requestId: locals.requestId };
	if (locals.apiToken)
		return {
			userId: u.id,
			tokenId: locals.apiToken.id,
			label: `token ${locals.apiToken.id} of ${u.email}`,
			requestId: locals.requestId
		};
	return { userId: u.id, label: u.email, requestId: locals.requestId };
}

/** The newest events of the whole trail, with the key of each event's project. */
export const recentEvents = (db: Db, limit: number) =>
	db('audit_events as e')
		.leftJoin('projects as p', 'p.id', 'e.project_id')
		.orderBy('e.seq', 'desc')
		.limit(limit)
		.select('e.*', 'p.key') as Promise<(StoredEvent & { key: string | null })[]>;
