import { error } from '@sveltejs/kit';
import { access, inAddress } from '$lib/server/auth';
import { ServiceError } from '$lib/server/errors';
import { modelOverview } from '$lib/server/models/service';
import type { PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, can, resource } = await access(event, inAddress(event.params, 'model'));
	let o;
	try {
		o = await modelOverview(project.id, resource.id);
	} catch (e) {
		if (e instanceof ServiceError) error(e.status, { message: e.message });
		throw e;
	}
	const { model: m, owner, versions, requirements: reqs } = o;
	return {
		project: { key: project.key, name: project.name },
		can,
		model: {
			id: Number(m.id),
			name: m.name,
			description: m.description,
			latestVersion: m.latest_version,
			owner
		},
		versions: versions.map((v) => ({
			id: Number(v.id),
			version: v.version,
			note: v.note,
			hash: v.content_hash,
			at: new Date(v.created_at).toISOString(),
			author: v.author_name ?? '—',
			points: Number(v.point_count)
		})),
		requirements: reqs.map((r) => ({
			id: Number(r.id),
			identifier: r.identifier,
			title: r.title,
			status: r.status,
			check: r.check,
			pinned: r.pinned_version,
			state: r.state
		}))
	};
}) satisfies PageServerLoad;
