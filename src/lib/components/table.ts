import type { Snippet } from 'svelte';

/** A column of DataTable: how to read a value (for sorting, filtering and plain display) and optionally how to draw it. */
export interface Column<T> {
	id: string;
	header: string;
	value: (row: T) => string | number | null | undefined;
	cell?: Snippet<[T]>;
	align?: 'left' | 'right';
	sortable?: boolean;
	mono?: boolean;
	/** The value is an ISO instant: drawn in the one date-time format (src/lib/datetime.ts). */
	time?: 'datetime' | 'date' | 'seconds';
}
