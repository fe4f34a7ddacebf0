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
		if (!url)
			throw new Error(
				'DATABASE_URL is not set (npm start and npm test set it; the npm commands beside npm start find its cluster)'
			);
		return url;
	},
	/**
	 * A read replica for the trace-matrix and export reads (DATABASE_READ_URL); unset, they read the
	 * primary (DATABASE_URL). Those reads may then lag the primary by the replica's delay.
	 */
	get databaseReadUrl(): string {
		return process.env.DATABASE_READ_URL || this.databaseUrl;
	},
	/** Connections per process in the Knex pool (DB_POOL_MAX; each app process and worker has its own). */
	get dbPoolMax(): number {
		return Math.max(1, int('DB_POOL_MAX', 10));
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
			// A run still queued after this long makes the health check say the queue is stalled (503 naming
			// the analysis workers when no worker is alive, the queue when one is).
			queueStaleSeconds: Math.max(1, int('LW_QUEUE_STALE_SECONDS', 300)),
			// A worker writes a heartbeat this often; silent for three intervals, it is not alive.
			workerHeartbeatSeconds: Math.max(1, int('LW_WORKER_HEARTBEAT_SECONDS', 10)),
			// Time budget of each engine check in a run (circle, Popov, largest sector), in seconds.
			engineBudgetSeconds: Math.min(600, Math.max(1, int('LW_ENGINE_BUDGET_SECONDS', 5)))
		};
	},
	/**
	 * Which queues a worker process takes jobs from: LW_WORKER_QUEUES, a comma list of "runs" and
	 * "packages" (default both). A deployment can give package builds their own worker (they take
	 * minutes and up to 320 MB) and keep the analysis workers free for re-verification.
	 */
	get workerQueues(): { runs: boolean; packages: boolean } {
		const v = (process.env.LW_WORKER_QUEUES ?? '').trim();
		if (v === '') return { runs: true, packages: true };
		const names = v.split(',').map((n) => n.trim());
		const unknown = names.filter((n) => n !== 'runs' && n !== 'packages');
		if (unknown.length || names.length === 0)
			throw new Error(`LW_WORKER_QUEUES must list "runs" and/or "packages" separated by commas, got "${v}"`);
		return { runs: names.includes('runs'), packages: names.includes('packages') };
	},
	/** Largest evidence file accepted, in bytes (default 200 MiB). */
	get evidenceMaxBytes(): number {
		return int('EVIDENCE_MAX_BYTES', 200 * 1024 * 1024);
	},
	/**
	 * Single sign-on through an OpenID Connect identity provider; null (off) unless OIDC_ISSUER,
	 * OIDC_CLIENT_ID and OIDC_CLIENT_SECRET are all set. The app's redirect URI at the provider is
	 * ORIGIN/auth/callback/oidc. `groupsClaim` names the claim holding the person's groups (an array
	 * of strings, or one string); `useUserinfo` reads the claims from the userinfo endpoint instead
	 * of the ID token; `freshLoginSeconds` is how recent a provider login must be for a signature.
	 */
	get oidc(): {
		issuer: string;
		clientId: string;
		clientSecret: string;
		name: string;
		groupsClaim: string;
		scope: string;
		useUserinfo: boolean;
		freshLoginSeconds: number;
	} | null {
		const issuer = process.env.OIDC_ISSUER?.trim();
		const clientId = process.env.OIDC_CLIENT_ID?.trim();
		const clientSecret = process.env.OIDC_CLIENT_SECRET;
		if (!issuer || !clientId || !clientSecret) return null;
		return {
			issuer: issuer.replace(/\/+$/, ''),
			clientId,
			clientSecret,
			name: process.env.OIDC_NAME?.trim() || 'your organisation',
			groupsClaim: process.env.OIDC_GROUPS_CLAIM?.trim() || 'groups',
			scope: process.env.OIDC_SCOPE?.trim() || 'openid email profile groups',
			useUserinfo: process.env.OIDC_USE_USERINFO === 'true',
			freshLoginSeconds: Math.max(10, int('OIDC_FRESH_LOGIN_SECONDS', 300))
		};
	},
	/** Largest requirements file an import reads (ReqIF, XLSX, CSV); it is held in memory. */
	get importMaxBytes(): number {
		return int('IMPORT_MAX_BYTES', 128 * 1024 * 1024);
	}
};
