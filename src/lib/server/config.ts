// Server configuration from the environment.
// Modules under src/lib/server are shared by the web app, the worker and the scripts (run with tsx,
// where SvelteKit's $env modules do not exist), so they read process.env here, in one place.
// Route code never reads the environment directly.

function int(name: string, fallback: number): number {
	const v = process.env[name];
	if (v === undefined || v === '') return fallback;
	const n = Number(v);
	if (!Number.isFinite(n)) throw new Error(`${name} must be a number, got "${v}"`);
	return n;
}

export const config = {
	get databaseUrl(): string {
		const url = process.env.DATABASE_URL;
		if (!url) throw new Error('DATABASE_URL is not set');
		return url;
	},
	get smtpUrl(): string | undefined {
		return process.env.SMTP_URL || undefined;
	},
	get mailFrom(): string {
		return process.env.MAIL_FROM || 'Loopwarden <no-reply@loopwarden.test>';
	},
	/** Where the local mail stand-in writes messages; only read in demo mode. */
	get mailFakeDir(): string | undefined {
		return process.env.MAIL_FAKE_DIR || undefined;
	},
	get publicOrigin(): string {
		return process.env.ORIGIN || 'http://127.0.0.1:4173';
	},
	get demoMode(): boolean {
		return process.env.DEMO_MODE === 'true';
	},
	get signInMaxFailures(): number {
		return int('SIGNIN_MAX_FAILURES', 5);
	},
	get signInWindowMinutes(): number {
		return int('SIGNIN_WINDOW_MINUTES', 15);
	},
	/** The S3-compatible object store for evidence files (see storage.ts). */
	get storage() {
		const endpoint = process.env.S3_ENDPOINT || undefined;
		const pathStyle = process.env.S3_FORCE_PATH_STYLE;
		return {
			endpoint,
			region: process.env.S3_REGION || 'us-east-1',
			bucket: process.env.S3_BUCKET || 'loopwarden-evidence',
			accessKeyId: process.env.S3_ACCESS_KEY_ID || undefined,
			secretAccessKey: process.env.S3_SECRET_ACCESS_KEY || undefined,
			// Path-style addressing by default with an endpoint: most self-hosted stores need it.
			forcePathStyle: pathStyle ? pathStyle === 'true' : !!endpoint
		};
	},
	/**
	 * Analysis runs. A run gets `maxAttempts` attempts (LW_RUN_RETRY_LIMIT retries after the first),
	 * counted on its analysis_runs row; a worker that stops mid-run leaves its job to expire after
	 * `expireSeconds`, and the queue hands it out again after `retryDelaySeconds`. `holdMs` makes a
	 * worker wait after claiming (the crash test only).
	 */
	get runs() {
		return {
			maxAttempts: Math.max(0, int('LW_RUN_RETRY_LIMIT', 4)) + 1,
			retryDelaySeconds: Math.max(1, int('LW_RUN_RETRY_DELAY_SECONDS', 1)),
			expireSeconds: Math.max(1, int('LW_RUN_EXPIRE_SECONDS', 20)),
			holdMs: Math.max(0, int('LW_WORKER_HOLD_MS', 0)),
			queueMaintenanceSeconds: Math.max(1, int('LW_QUEUE_MAINTENANCE_SECONDS', 2)),
			// A run still queued after this long makes the health check say the queue is stalled.
			queueStaleSeconds: Math.max(1, int('LW_QUEUE_STALE_SECONDS', 300)),
			// Time budget of each engine check in a run (circle, Popov, largest sector), in seconds.
			engineBudgetSeconds: Math.min(600, Math.max(1, int('LW_ENGINE_BUDGET_SECONDS', 5)))
		};
	},
	/** Largest evidence file accepted, in bytes (default 200 MiB). */
	get evidenceMaxBytes(): number {
		return int('EVIDENCE_MAX_BYTES', 200 * 1024 * 1024);
	}
};
