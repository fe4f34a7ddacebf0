import { env } from './env';

/**
 * A tiny HTTP client that keeps cookies like a browser and sends the Origin header that
 * SvelteKit's CSRF check expects on form posts.
 */
export class Client {
	cookies = new Map<string, string>();
	constructor(public base = env.baseUrl) {}

	private cookieHeader() {
		return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
	}

	private keep(res: Response) {
		for (const c of res.headers.getSetCookie()) {
			const [pair, ...attrs] = c.split(';');
			const i = pair.indexOf('=');
			const name = pair.slice(0, i).trim();
			const value = pair.slice(i + 1).trim();
			const expired = attrs.some((a) => /max-age=0\b/i.test(a) || /expires=thu, 01 jan 1970/i.test(a));
			if (expired || value === '') this.cookies.delete(name);
			else this.cookies.set(name, value);
		}
	}

	async request(path: string, init: RequestInit = {}): Promise<Response> {
		const headers = new Headers(init.headers);
		if (this.cookies.size) headers.set('cookie', this.cookieHeader());
		if (!headers.has('origin')) headers.set('origin', this.base);
		const res = await fetch(this.base + path, { redirect: 'manual', ...init, headers });
		this.keep(res);
		return res;
	}

	get(path: string, headers: Record<string, string> = {}) {
		return this.request(path, { headers });
	}

	/** A form post as a browser without JavaScript sends it. */
	postForm(path: string, fields: Record<string, string>, headers: Record<string, string> = {}) {
		return this.request(path, {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', ...headers },
			body: new URLSearchParams(fields)
		});
	}

	/**
	 * A form post as `use:enhance` sends it: the answer is JSON
	 * `{ type: 'success' | 'failure' | 'redirect' | 'error', status, data }` (data is devalue-encoded).
	 */
	async action(path: string, fields: Record<string, string>) {
		const res = await this.request(path, {
			method: 'POST',
			headers: {
				'content-type': 'application/x-www-form-urlencoded',
				accept: 'application/json',
				'x-sveltekit-action': 'true'
			},
			body: new URLSearchParams(fields)
		});
		const body = await res.json();
		return { httpStatus: res.status, ...body, data: body.data ? decodeDevalue(body.data) : undefined } as {
			httpStatus: number;
			type: 'success' | 'failure' | 'redirect' | 'error';
			status?: number;
			location?: string;
			data?: Record<string, unknown>;
			error?: { message: string };
		};
	}

	json(path: string, method: string, body: unknown, headers: Record<string, string> = {}) {
		return this.request(path, {
			method,
			headers: { 'content-type': 'application/json', accept: 'application/json', ...headers },
			body: JSON.stringify(body)
		});
	}

	async signIn(email: string, password: string): Promise<Response> {
		return this.postForm('/signin', { email, password, redirectTo: '/' });
	}

	get signedIn() {
		return [...this.cookies.keys()].some((k) => k.endsWith('authjs.session-token'));
	}
}

/** Decode SvelteKit's devalue format (as used for action data) without importing kit internals. */
export function decodeDevalue(text: string): Record<string, unknown> {
	const values = JSON.parse(text) as unknown[];
	const cache = new Map<number, unknown>();
	const hydrate = (i: number): unknown => {
		if (i === -1) return undefined;
		if (cache.has(i)) return cache.get(i);
		const v = values[i];
		if (Array.isArray(v)) {
			if (typeof v[0] === 'string') {
				// special types (Date, Map, ...): keep the raw payload
				cache.set(i, v[1]);
				return v[1];
			}
			const arr: unknown[] = [];
			cache.set(i, arr);
			for (const j of v) arr.push(hydrate(j as number));
			return arr;
		}
		if (v && typeof v === 'object') {
			const obj: Record<string, unknown> = {};
			cache.set(i, obj);
			for (const [k, j] of Object.entries(v)) obj[k] = hydrate(j as number);
			return obj;
		}
		cache.set(i, v);
		return v;
	};
	return hydrate(0) as Record<string, unknown>;
}

/** A signed-in client; throws when sign-in fails. */
export async function signedIn(email: string, password: string): Promise<Client> {
	const c = new Client();
	const res = await c.signIn(email, password);
	if (!c.signedIn) throw new Error(`sign-in as ${email} failed: HTTP ${res.status}`);
	return c;
}
