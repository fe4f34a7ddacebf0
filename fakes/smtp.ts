import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { simpleParser, type AddressObject } from 'mailparser';
import { SMTPServer } from 'smtp-server';

// A local SMTP stand-in: accepts every message on loopback and keeps it on disk as the raw .eml
// and a parsed .json (to, subject, text, date). Tests and the demo admin page read the .json files.

function addresses(a: AddressObject | AddressObject[] | undefined): string {
	if (!a) return '';
	return (Array.isArray(a) ? a : [a]).map((x) => x.text).join(', ');
}

export async function startSmtpFake(opts: { port: number; dir: string; host?: string }): Promise<SMTPServer> {
	await mkdir(opts.dir, { recursive: true });
	let seq = 0;
	const server = new SMTPServer({
		authOptional: true,
		disabledCommands: ['STARTTLS'],
		logger: false,
		onData(stream, session, callback) {
			const chunks: Buffer[] = [];
			stream.on('data', (c: Buffer) => chunks.push(c));
			stream.on('end', async () => {
				try {
					const raw = Buffer.concat(chunks);
					const parsed = await simpleParser(raw);
					const id = `${new Date().toISOString().replace(/[:.]/g, '-')}-${process.pid}-${++seq}`;
					const rcpt = session.envelope.rcptTo.map((r) => r.address).join(', ');
					await writeFile(join(opts.dir, `${id}.eml`), raw);
					await writeFile(
						join(opts.dir, `${id}.json`),
						JSON.stringify(
							{
								to: addresses(parsed.to) || rcpt,
								envelopeTo: session.envelope.rcptTo.map((r) => r.address),
								from: addresses(parsed.from),
								subject: parsed.subject ?? '',
								text: parsed.text ?? '',
								date: (parsed.date ?? new Date()).toISOString()
							},
							null,
							2
						)
					);
					callback();
				} catch (e) {
					callback(e as Error);
				}
			});
		}
	});
	await new Promise<void>((resolve, reject) => {
		server.once('error', reject);
		server.listen(opts.port, opts.host ?? '127.0.0.1', () => resolve());
	});
	return server;
}
