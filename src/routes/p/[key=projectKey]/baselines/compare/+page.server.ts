import { error } from '@sveltejs/kit';
import { access } from '$lib/server/auth';
import { compare, listBaselines } from '$lib/server/baselines/service';
import { compareQuery } from '$lib/server/baselines/schema';
import { ServiceError } from '$lib/server/errors';
import type { PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project } = await access(event, { project: event.params.key });
	const parsed = compareQuery.safeParse({
		from: event.url.searchParams.get('from') ?? undefined,
		to: event.url.searchParams.get('to') || undefined
	});
	if (!parsed.success)
		error(400, { message: 'Choose a baseline to compare from (?from=<id>&to=<id or now>).' });
	try {
		const r = await compare(project.id, parsed.data.from, parsed.data.to);
		const baselines = (await listBaselines(project.id)).map((b) => ({
			id: Number(b.id),
			number: b.number,
			label: b.label
		}));
		return {
			project: { key: project.key, name: project.name },
			from: {
				kind: r.from.kind,
				label: r.from.label,
				hash: r.from.hash,
				id: r.from.baseline ? Number(r.from.baseline.id) : null
			},
			to: {
				kind: r.to.kind,
				label: r.to.label,
				hash: r.to.hash,
				id: r.to.baseline ? Number(r.to.baseline.id) : null
			},
			comparison: r.comparison,
			baselines,
			selected: { from: String(parsed.data.from), to: String(parsed.data.to) }
		};
	} catch (e) {
		if (e instanceof ServiceError) error(e.status, { message: e.message });
		throw e;
	}
}) satisfies PageServerLoad;
