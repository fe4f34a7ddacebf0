import type { ParamMatcher } from '@sveltejs/kit';

// A project key: 2–10 capital letters or digits, starting with a letter. Anything else is a 404
// before a load runs.
export const match = ((param: string) => /^[A-Z][A-Z0-9]{1,9}$/.test(param)) satisfies ParamMatcher;
