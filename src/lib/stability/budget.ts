// Time budget for one check. The engine is synchronous, so a cooperative deadline is enough: the long loops
// (root isolation, exact Routh rows, root-finding iterations, sweeps) call `tick()`, which throws
// `BudgetExceeded` once the deadline has passed; the check's entry point turns that into an inconclusive
// result that names the budget. Only one budget is active at a time (checks do not nest across budgets).

/** Default budget of one check, in seconds. */
export const DEFAULT_BUDGET_SECONDS = 5;

export interface EngineOptions {
	/** Wall-clock budget of one check in seconds (default 5). */
	budgetSeconds?: number;
}

export class BudgetExceeded extends Error {
	readonly seconds: number;
	constructor(seconds: number) {
		super(`time budget of ${seconds} s exceeded`);
		this.name = 'BudgetExceeded';
		this.seconds = seconds;
	}
}

const now = (): number => (typeof performance !== 'undefined' ? performance.now() : Date.now());

let deadline = Infinity;
let activeSeconds = 0;
let counter = 0;

/** Throws BudgetExceeded when the active budget has run out. Cheap: reads the clock every 8th call. */
export function tick(): void {
	if (deadline === Infinity) return;
	if ((++counter & 7) !== 0) return;
	if (now() > deadline) throw new BudgetExceeded(activeSeconds);
}

/** Like tick(), but always reads the clock (for loops whose single step is expensive). */
export function tickNow(): void {
	if (deadline !== Infinity && now() > deadline) throw new BudgetExceeded(activeSeconds);
}

/**
 * Run `fn` under a budget of `seconds`. A budget already active (an outer check calling an inner one) is
 * kept: the inner call cannot extend it. Returns `onExceeded(e)` when the budget runs out.
 */
export function withBudget<T>(
	seconds: number | undefined,
	fn: () => T,
	onExceeded: (e: BudgetExceeded) => T
): T {
	if (deadline !== Infinity) return fn();
	const s =
		seconds !== undefined && seconds > 0 && Number.isFinite(seconds) ? seconds : DEFAULT_BUDGET_SECONDS;
	deadline = now() + s * 1000;
	activeSeconds = s;
	try {
		return fn();
	} catch (e) {
		if (e instanceof BudgetExceeded) return onExceeded(e);
		throw e;
	} finally {
		deadline = Infinity;
	}
}
