import { readdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { env } from './env';

export interface FakeMail {
	file: string;
	to: string;
	envelopeTo: string[];
	subject: string;
	text: string;
}

export async function allMail(): Promise<FakeMail[]> {
	let names: string[];
	try {
		names = (await readdir(env.mailDir)).filter((n) => n.endsWith('.json')).sort();
	} catch {
		return [];
	}
	const out: FakeMail[] = [];
	for (const n of names) {
		try {
			out.push({ file: n, ...JSON.parse(await readFile(join(env.mailDir, n), 'utf8')) });
		} catch {
			// being written
		}
	}
	return out;
}

export function mailTo(address: string, all: FakeMail[]): FakeMail[] {
	const a = address.toLowerCase();
	return all.filter((m) => m.envelopeTo.map((x) => x.toLowerCase()).includes(a));
}

/**
 * Wait until the mail stand-in received a message to `address` (optionally matching the subject)
 * and return it; fails with a message listing what did arrive.
 */
export async function expectMailTo(
	address: string,
	opts: { subject?: RegExp; timeoutMs?: number; after?: number } = {}
): Promise<FakeMail> {
	const deadline = Date.now() + (opts.timeoutMs ?? 15_000);
	let seen: FakeMail[] = [];
	while (Date.now() < deadline) {
		seen = mailTo(address, await allMail()).slice(opts.after ?? 0);
		const hit = seen.find((m) => !opts.subject || opts.subject.test(m.subject));
		if (hit) return hit;
		await new Promise((r) => setTimeout(r, 200));
	}
	throw new Error(
		`no mail to ${address}${opts.subject ? ` with subject ${opts.subject}` : ''} arrived; got: ` +
			(seen.map((m) => `"${m.subject}"`).join(', ') || 'nothing')
	);
}

export function linkIn(mail: FakeMail, pathPrefix: string): string {
	const m = mail.text.match(new RegExp(`https?://[^\\s]+${pathPrefix.replace(/\//g, '\\/')}[^\\s]*`));
	if (!m) throw new Error(`no ${pathPrefix} link in mail "${mail.subject}":\n${mail.text}`);
	return new URL(m[0]).pathname;
}
