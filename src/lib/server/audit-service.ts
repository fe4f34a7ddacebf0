import { recentEvents, verifyChain } from './audit';
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
	const rows = await recentEvents(db(), limit);
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
