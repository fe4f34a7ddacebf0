import type { ParamMatcher } from '@sveltejs/kit';

export const match = ((param: string) => /^[1-9][0-9]{0,14}$/.test(param)) satisfies ParamMatcher;
