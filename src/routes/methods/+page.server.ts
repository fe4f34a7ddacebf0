import { ENGINE_VERSION } from '$lib/stability';
import { REQIF_ATTRIBUTES } from '$lib/requirements/reqif';
import { ACT_LABELS, MEANINGS, NOT_MEANT, SIGNED_ACTS } from '$lib/server/signatures/meanings';
import type { PageServerLoad } from './$types';

// Public: how verdicts are decided, what each signature means (the words stored with it), and how
// requirements are exchanged (the ReqIF attribute mapping).
export const load = (() => ({
	engineVersion: ENGINE_VERSION,
	reqifAttributes: REQIF_ATTRIBUTES,
	signatures: SIGNED_ACTS.map((act) => ({
		act,
		label: ACT_LABELS[act],
		meaning: MEANINGS[act],
		notMeant: NOT_MEANT[act]
	}))
})) satisfies PageServerLoad;
