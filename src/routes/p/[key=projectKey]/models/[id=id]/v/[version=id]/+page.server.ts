import { error } from '@sveltejs/kit';
import { access, inAddress } from '$lib/server/auth';
import { runsForModelVersion } from '$lib/server/analyses/service';
import { ServiceError } from '$lib/server/errors';
import { getModel, getVersion } from '$lib/server/models/service';
import type { PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, resource } = await access(event, inAddress(event.params, 'model'));
	const modelId = resource.id;
	const n = Number(event.params.version);
	try {
		const m = await getModel(project.id, modelId);
		const v = await getVersion(project.id, modelId, n);
		const prev = n > 1 ? await getVersion(project.id, modelId, n - 1).catch(() => null) : null;
		const runs = await runsForModelVersion(Number(v.id));
		const present = (x: NonNullable<typeof prev>) => ({
			id: Number(x.id),
			version: x.version,
			note: x.note,
			hash: x.content_hash,
			author: x.author_name ?? '—',
			at: new Date(x.created_at).toISOString(),
			operatingPoints: x.content.operatingPoints
		});
		return {
			project: { key: project.key, name: project.name },
			model: { id: Number(m.id), name: m.name, latestVersion: m.latest_version },
			version: present(v),
			previous: prev ? present(prev) : null,
			unchanged: event.url.searchParams.has('unchanged'),
			runs
		};
	} catch (e) {
		if (e instanceof ServiceError) error(e.status, { message: e.message });
		throw e;
	}
}) satisfies PageServerLoad;
