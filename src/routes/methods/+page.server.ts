import { ENGINE_VERSION } from '$lib/stability';
import type { PageServerLoad } from './$types';

// Public: how verdicts are decided.
export const load = (() => ({ engineVersion: ENGINE_VERSION })) satisfies PageServerLoad;
