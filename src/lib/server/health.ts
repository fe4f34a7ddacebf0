import { db } from './db';
import { checkMail } from './mail';

export type CheckFn = () => Promise<'ok' | string>;

const checks: Record<string, CheckFn> = {
	database: async () => {
		try {
			await db().raw('select 1');
			return 'ok';
		} catch (e) {
			return `unreachable: ${(e as Error).message}`;
		}
	},
	mail: checkMail
};

/** Other modules (storage, the job queue) add their own check here. */
export function registerHealthCheck(name: string, fn: CheckFn): void {
	checks[name] = fn;
}

export async function health(): Promise<{ status: 'ok' | 'degraded'; checks: Record<string, string> }> {
	const names = Object.keys(checks);
	const results = await Promise.all(
		names.map((n) =>
			Promise.race([
				checks[n](),
				new Promise<string>((r) => setTimeout(() => r('timed out after 3 s'), 3_000).unref?.())
			])
		)
	);
	const out: Record<string, string> = {};
	names.forEach((n, i) => (out[n] = results[i]));
	return { status: results.every((r) => r === 'ok') ? 'ok' : 'degraded', checks: out };
}
