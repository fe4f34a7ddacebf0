import type { Db } from '../db';

// SQL of the mail outbox (mail.ts composes nothing here and sends through nodemailer).

export interface OutboxRow {
	id: number;
	to_address: string;
	subject: string;
	body_text: string;
	attempts: number;
}

export const outbox = {
	insert: (db: Db, mail: { to: string; subject: string; text: string }) =>
		db('mail_outbox').insert({ to_address: mail.to, subject: mail.subject, body_text: mail.text }),
	/** The oldest message due for delivery, locked; one another deliverer holds is skipped. */
	nextDue: (db: Db) =>
		db('mail_outbox')
			.whereNull('sent_at')
			.where('next_attempt_at', '<=', db.fn.now())
			.orderBy('id')
			.forUpdate()
			.skipLocked()
			.first() as Promise<OutboxRow | undefined>,
	markSent: (db: Db, row: OutboxRow) =>
		db('mail_outbox')
			.where({ id: row.id })
			.update({ sent_at: db.fn.now(), attempts: row.attempts + 1 }),
	markFailed: (db: Db, row: OutboxRow, error: string, retryInSeconds: number) =>
		db('mail_outbox')
			.where({ id: row.id })
			.update({
				attempts: row.attempts + 1,
				last_error: error.slice(0, 500),
				next_attempt_at: db.raw(`now() + (? || ' seconds')::interval`, [String(retryInSeconds)])
			})
};
