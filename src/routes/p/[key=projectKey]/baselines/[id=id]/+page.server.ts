import { error, fail, redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access, inAddress } from '$lib/server/auth';
import { latestPackages, requestPackage } from '$lib/server/packages/service';
import { packageFormProblems } from '$lib/server/packages/schema';
import { frozenWords, getBaseline, releaseOf } from '$lib/server/baselines/service';
import { ServiceError } from '$lib/server/errors';
import { stateWords } from '$lib/server/trace/export';
import { COMBINED_LOOK, COMBINED_STATES } from '$lib/verification';
import type { Actions, PageServerLoad } from './$types';

const SHOWN = 1000;

export const load = (async (event) => {
	const { project, resource, can } = await access(event, inAddress(event.params, 'baseline'));
	let b;
	try {
		b = await getBaseline(project.id, resource.id);
	} catch (e) {
		if (e instanceof ServiceError) error(e.status, { message: e.message });
		throw e;
	}
	const m = b.manifest;
	// Counted by the state as frozen (a manifest frozen before the one verification state keeps its
	// own state names; those are listed under their own name).
	const counts = new Map<string, number>(COMBINED_STATES.map((s) => [s, 0]));
	for (const r of m.requirements) counts.set(r.state, (counts.get(r.state) ?? 0) + 1);
	const states = [...counts].map(([state, n]) => {
		const look = COMBINED_LOOK[state as keyof typeof COMBINED_LOOK];
		return { state, n, symbol: look?.symbol ?? '', label: look?.label ?? state };
	});
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
			frozen: frozenWords(r.frozen),
			title: r.title,
			state: r.state,
			stateWords: stateWords(r),
			model: r.model ? `${r.model.name} v${r.model.version ?? '?'}` : '',
			verdict: r.latestRun?.verdict ?? '',
			hash: r.contentHash
		})),
		truncated: m.requirements.length > SHOWN,
		can,
		packages: await latestPackages(project, Number(b.id)),
		release: await releaseOf(resource.id),
		deferredFindings: m.deferredFindings ?? []
	};
}) satisfies PageServerLoad;

export const actions = {
	// Queue this baseline's data package; the page then shows its progress.
	package: async (event) => {
		const { project, resource } = await access(
			event,
			inAddress(event.params, 'baseline'),
			'generatePackages'
		);
		const problems = await packageFormProblems(event.request);
		if (problems) return fail(400, { action: 'package', errors: problems });
		await requestPackage(actorOf(event.locals), project, resource.id);
		redirect(303, `/p/${project.key}/baselines/${resource.id}`);
	}
} satisfies Actions;
