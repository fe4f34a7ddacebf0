// Live pages, in the browser: one poll of GET /api/v1/projects/{key}/live per project per tab, shared by
// every part of the page that shows a state (the analysis panel, the requirement list, the trace matrix).
// Each listener is told the stamp when it is first read and whenever it moves; it then re-reads its own
// data. The first call comes from a stamp read before that data, so a change committed in between is
// never missed (at worst it is read twice). Why polling and not server-sent events: see
// src/lib/server/live/service.ts.

export interface LiveInfo {
	stamp: string;
	/** Analysis runs of the project queued or running. */
	pending: number;
}
type Listener = (info: LiveInfo) => void;

/** While runs are queued or running, and for a while after a change, the page asks more often. */
const FAST_MS = 1_500;
const CALM_MS = 4_000;
const FAST_AFTER_CHANGE_MS = 20_000;
const RETRY_MAX_MS = 30_000;

interface Watch {
	key: string;
	/** Each listener with the stamp it was last told (null: not yet). */
	listeners: Map<Listener, string | null>;
	last: LiveInfo | null;
	timer: ReturnType<typeof setTimeout> | undefined;
	busy: boolean;
	again: boolean;
	failures: number;
	changedAt: number;
	stopped: boolean;
}

const watches = new Map<string, Watch>();

function schedule(w: Watch) {
	clearTimeout(w.timer);
	if (w.stopped || w.listeners.size === 0) return;
	// A hidden tab does not ask; it asks at once when shown again (see the visibility listener).
	if (typeof document !== 'undefined' && document.visibilityState === 'hidden') return;
	const fast = (w.last?.pending ?? 0) > 0 || Date.now() - w.changedAt < FAST_AFTER_CHANGE_MS;
	const ms = w.failures ? Math.min(RETRY_MAX_MS, 1_000 * 2 ** w.failures) : fast ? FAST_MS : CALM_MS;
	w.timer = setTimeout(() => void poll(w), ms);
}

async function poll(w: Watch): Promise<void> {
	if (w.busy) {
		w.again = true;
		return;
	}
	w.busy = true;
	clearTimeout(w.timer);
	try {
		const res = await fetch(`/api/v1/projects/${encodeURIComponent(w.key)}/live`, {
			headers: { accept: 'application/json' }
		});
		if (res.status === 401 || res.status === 403 || res.status === 404) {
			// Signed out or no longer a member: stop asking; each listener reads once more, and its own
			// read then says what is wrong.
			w.stopped = true;
			for (const l of [...w.listeners.keys()]) l({ stamp: '', pending: 0 });
			return;
		}
		if (!res.ok) throw new Error(`HTTP ${res.status}`);
		const info = (await res.json()) as LiveInfo;
		w.failures = 0;
		if (w.last && w.last.stamp !== info.stamp) w.changedAt = Date.now();
		w.last = info;
		for (const [l, seen] of [...w.listeners]) {
			if (seen === info.stamp || !w.listeners.has(l)) continue;
			w.listeners.set(l, info.stamp);
			l(info);
		}
	} catch {
		w.failures = Math.min(w.failures + 1, 5);
	} finally {
		w.busy = false;
		if (w.again) {
			w.again = false;
			void poll(w);
		} else schedule(w);
	}
}

let visibilityHooked = false;
function hookVisibility() {
	if (visibilityHooked || typeof document === 'undefined') return;
	visibilityHooked = true;
	document.addEventListener('visibilitychange', () => {
		if (document.visibilityState !== 'visible') return;
		for (const w of watches.values()) if (w.listeners.size) void poll(w);
	});
}

/**
 * Call `listener` with the project's stamp now and whenever it moves. Returns the function that stops
 * (use it as the cleanup of onMount or $effect).
 */
export function watchProject(key: string, listener: Listener): () => void {
	hookVisibility();
	let w = watches.get(key);
	if (!w) {
		w = {
			key,
			listeners: new Map(),
			last: null,
			timer: undefined,
			busy: false,
			again: false,
			failures: 0,
			changedAt: 0,
			stopped: false
		};
		watches.set(key, w);
	}
	const watch = w;
	watch.listeners.set(listener, null);
	watch.stopped = false;
	// A new listener is told the stamp at the next answer: ask now.
	watch.changedAt = Date.now();
	void poll(watch);
	return () => {
		watch.listeners.delete(listener);
		if (watch.listeners.size === 0) {
			clearTimeout(watch.timer);
			watches.delete(key);
		}
	};
}

/** Ask at once (after this page changed something, e.g. a saved specification). */
export function pokeProject(key: string): void {
	const w = watches.get(key);
	if (!w) return;
	w.changedAt = Date.now();
	void poll(w);
}

/**
 * Run `load` when the project's stamp is first read and whenever it moves: one load at a time (a
 * move during a load runs one more afterwards) and at most every `minMs`. Returns the function that
 * stops.
 */
export function reloadOnChange(key: string, load: () => Promise<void>, minMs: number): () => void {
	let timer: ReturnType<typeof setTimeout> | undefined;
	let running = false;
	let again = false;
	let lastAt = 0;
	let stopped = false;
	const run = async () => {
		clearTimeout(timer);
		running = true;
		lastAt = Date.now();
		try {
			await load();
		} finally {
			running = false;
			if (again && !stopped) {
				again = false;
				request();
			}
		}
	};
	const request = () => {
		if (stopped) return;
		if (running) {
			again = true;
			return;
		}
		clearTimeout(timer);
		const wait = lastAt + minMs - Date.now();
		if (wait > 0) timer = setTimeout(request, wait);
		else void run();
	};
	const unwatch = watchProject(key, request);
	return () => {
		stopped = true;
		clearTimeout(timer);
		unwatch();
	};
}
