import { error } from '@sveltejs/kit';
import { access, inAddress } from '$lib/server/auth';
import { getBaseline } from '$lib/server/baselines/service';
import { ServiceError } from '$lib/server/errors';
import { COMBINED_STATES } from '$lib/trace/states';
import type { PageServerLoad } from './$types';

const SHOWN = 1000;

export const load = (async (event) => {
	const { project, resource } = await access(event, inAddress(event.params, 'baseline'));
	let b;
	try {
		b = await getBaseline(project.id, resource.id);
	} catch (e) {
		if (e instanceof ServiceError) error(e.status, { message: e.message });
		throw e;
	}
	const m = b.manifest;
	const states = Object.fromEntries(COMBINED_STATES.map((s) => [s, 0])) as Record<
		(typeof COMBINED_STATES)[number],
		number
	>;
	for (const r of m.requirements) states[r.state]++;
	return {
		project: { key: project.key, name: project.name },
		baseline: {
			id: Number(b.id),
			number: b.number,
			label: b.label,
			note: b.note,
			hash: b.manifest_hash,
			verified: b.verified,
			engineVersion: m.engineVersion,
			by: b.created_by_label,
			at: new Date(b.created_at).toISOString()
		},
		counts: {
			requirements: m.requirements.length,
			links: m.links.length,
			modelVersions: m.modelVersions.length,
			evidence: m.evidence.length,
			analyses: m.requirements.filter((r) => r.latestRun).length
		},
		states,
		modelVersions: m.modelVersions,
		requirements: m.requirements.slice(0, SHOWN).map((r) => ({
			identifier: r.identifier,
			revision: r.revision,
			title: r.title,
			state: r.state,
			model: r.model ? `${r.model.name} v${r.model.version ?? '?'}` : '',
			verdict: r.latestRun?.verdict ?? '',
			hash: r.contentHash
		})),
		truncated: m.requirements.length > SHOWN
	};
}) satisfies PageServerLoad;
