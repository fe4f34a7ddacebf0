import { readdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { config } from './config';

export interface ReceivedMail {
	id: string;
	to: string;
	subject: string;
	text: string;
	date: string;
}

/** Demo mode only: what the local mail stand-in received (it writes one JSON file per message). */
export async function receivedMail(limit = 100): Promise<ReceivedMail[]> {
	const dir = config.mailFakeDir;
	if (!dir) return [];
	let names: string[];
	try {
		names = (await readdir(dir)).filter((n) => n.endsWith('.json'));
	} catch {
		return [];
	}
	names.sort().reverse();
	const out: ReceivedMail[] = [];
	for (const n of names.slice(0, limit)) {
		try {
			const m = JSON.parse(await readFile(join(dir, n), 'utf8'));
			out.push({ id: n.replace(/\.json$/, ''), to: m.to, subject: m.subject, text: m.text, date: m.date });
		} catch {
			// a message still being written: skip it
		}
	}
	return out;
}
