import { verifyChain, type StoredEvent } from './audit';
import { db } from './db';

export interface EventView {
	seq: number;
	at: string;
	actor: string;
	action: string;
	subject: string;
	projectKey: string | null;
	hash: string;
}

export async function listRecentEvents(limit = 200): Promise<EventView[]> {
	const rows: (StoredEvent & { key: string | null })[] = await db()('audit_events as e')
		.leftJoin('projects as p', 'p.id', 'e.project_id')
		.orderBy('e.seq', 'desc')
		.limit(limit)
		.select('e.*', 'p.key');
	return rows.map((r) => ({
		seq: r.seq,
		at: new Date(r.at).toISOString(),
		actor: r.actor_label,
		action: r.action,
		subject: `${r.subject_type}${r.subject_id ? ' ' + r.subject_id : ''}`,
		projectKey: r.key,
		hash: r.hash
	}));
}

export const verifyAuditTrail = () => verifyChain(db());
