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

const details: Record<string, () => Promise<unknown>> = {};

/**
 * Other modules (storage, the job queue) add their own check here, and optionally the figures behind it
 * (shown under `details`, e.g. the workers' last heartbeat).
 */
export function registerHealthCheck(name: string, fn: CheckFn, detail?: () => Promise<unknown>): void {
	checks[name] = fn;
	if (detail) details[name] = detail;
}

/** Within 3 s, or the given stand-in: a hanging dependency must not hang the health check. */
function within3s<T>(p: Promise<T>, late: T): Promise<T> {
	return Promise.race([p, new Promise<T>((r) => setTimeout(() => r(late), 3_000).unref?.())]);
}

export async function health(): Promise<{
	status: 'ok' | 'degraded';
	checks: Record<string, string>;
	details?: Record<string, unknown>;
}> {
	const names = Object.keys(checks);
	const detailNames = Object.keys(details);
	const [results, figures] = await Promise.all([
		Promise.all(names.map((n) => within3s(checks[n](), 'timed out after 3 s'))),
		Promise.all(
			detailNames.map((n) =>
				within3s<unknown>(
					details[n]().catch((e) => ({ unavailable: (e as Error).message })),
					{ unavailable: 'timed out after 3 s' }
				)
			)
		)
	]);
	const out: Record<string, string> = {};
	names.forEach((n, i) => (out[n] = results[i]));
	const status = results.every((r) => r === 'ok') ? ('ok' as const) : ('degraded' as const);
	if (!detailNames.length) return { status, checks: out };
	const more: Record<string, unknown> = {};
	detailNames.forEach((n, i) => (more[n] = figures[i]));
	return { status, checks: out, details: more };
}
