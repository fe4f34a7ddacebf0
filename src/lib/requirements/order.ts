// The order of requirement identifiers wherever people see a list of them: natural order, so the
// digits compare as numbers ("VX7-2" before "VX7-10"), letters without regard to case. The database
// orders by the requirement's number (the same order within a project); this is the browser's rule,
// for the matrix's sorting and its groups. Pure.

const collator = new Intl.Collator('en', { numeric: true, sensitivity: 'base' });

/** Compare two identifiers (or lists of them, joined with ", ") in natural order. */
export function compareIdentifiers(a: string, b: string): number {
	return collator.compare(a, b) || (a < b ? -1 : a > b ? 1 : 0);
}

/** A copy of `items` in natural order of `key`. */
export function byIdentifier<T>(items: readonly T[], key: (item: T) => string): T[] {
	return [...items].sort((x, y) => compareIdentifiers(key(x), key(y)));
}
