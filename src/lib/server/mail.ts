import nodemailer, { type Transporter } from 'nodemailer';
import { config } from './config';
import { db, type Db } from './db';
import { outbox } from './outbox/repo';

// Mail goes through an outbox table: a change and the mail it causes are written in one
// transaction, and delivery is retried until the SMTP relay accepts the message.

let transporter: Transporter | undefined;

function transport(): Transporter | undefined {
	const url = config.smtpUrl;
	if (!url) return undefined;
	transporter ??= nodemailer.createTransport(
		url.startsWith('smtp://') && url.includes('127.0.0.1')
			? { url, ignoreTLS: true, secure: false, connectionTimeout: 3_000, greetingTimeout: 3_000 }
			: url
	);
	return transporter;
}

export interface Mail {
	to: string;
	subject: string;
	text: string;
}

/** Queue a mail in the caller's transaction. Call `kickMail()` after the commit. */
export async function enqueueMail(trx: Db, mail: Mail): Promise<void> {
	await outbox.insert(trx, mail);
}

/** Queue one mail to each of some users (the active ones), greeting each by name. */
export async function mailUsers(trx: Db, userIds: (number | null)[], subject: string, text: string) {
	for (const id of new Set(userIds.filter((x): x is number => x != null).map(Number))) {
		const u = await trx('users').where({ id }).first('email', 'display_name', 'disabled');
		if (u && !u.disabled)
			await enqueueMail(trx, {
				to: u.email,
				subject,
				text: `Hello ${u.display_name},\n\n${text}\n\n-- Loopwarden\n`
			});
	}
}

let running: Promise<number> | undefined;

/** Try to deliver every due message once. Returns how many were delivered. */
export function deliverPendingMail(): Promise<number> {
	running ??= deliver().finally(() => (running = undefined));
	return running;
}

async function deliver(): Promise<number> {
	const t = transport();
	if (!t) return 0;
	let sent = 0;
	for (;;) {
		const delivered = await db().transaction(async (trx) => {
			const row = await outbox.nextDue(trx);
			if (!row) return null;
			try {
				await t.sendMail({
					from: config.mailFrom,
					to: row.to_address,
					subject: row.subject,
					text: row.body_text
				});
				await outbox.markSent(trx, row);
				return true;
			} catch (e) {
				// Back off: 5 s, 10 s, 20 s ... at most 10 minutes.
				const delay = Math.min(600, 5 * 2 ** Math.min(row.attempts, 7));
				await outbox.markFailed(trx, row, String((e as Error).message ?? e), delay);
				return false;
			}
		});
		if (delivered === null || delivered === false) break;
		sent++;
	}
	return sent;
}

/** Deliver soon, without making the caller wait. */
export function kickMail(): void {
	deliverPendingMail().catch((e) => console.error('[mail] delivery failed:', e?.message ?? e));
}

let timer: ReturnType<typeof setInterval> | undefined;
export function startMailLoop(intervalMs = 5_000): void {
	if (timer) return;
	timer = setInterval(kickMail, intervalMs);
	timer.unref?.();
}

/** Health: can we open an SMTP session with the relay? */
export async function checkMail(): Promise<'ok' | string> {
	const t = transport();
	if (!t) return 'not configured (SMTP_URL unset)';
	try {
		await t.verify();
		return 'ok';
	} catch (e) {
		return `unreachable: ${(e as Error).message}`;
	}
}
