import { METHODS } from '$lib/requirements/vocabulary';
import { COMBINED_LOOK, COMBINED_STATES, LEVEL_LABELS } from '$lib/verification';

// The options of the shared filters, with their words from the one verification module.

export const STATE_OPTIONS = COMBINED_STATES.map((s) => ({
	value: s,
	label: `${COMBINED_LOOK[s].symbol} ${COMBINED_LOOK[s].label}`
}));
export const LEVEL_OPTIONS = Object.entries(LEVEL_LABELS).map(([value, label]) => ({ value, label }));
export const METHOD_OPTIONS = METHODS.map((m) => ({ value: m, label: m }));
