import { json } from '@sveltejs/kit';
import { endpoint, readJson } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { access, inAddress } from '$lib/server/auth';
import { getModel, listVersions, publishVersion } from '$lib/server/models/service';
import type { RequestHandler } from './$types';

function presentVersion(v: {
	id: number;
	model_id?: number;
	version: number;
	note: string;
	content_hash: string;
	created_at: Date;
}) {
	return {
		id: Number(v.id),
		version: v.version,
		note: v.note,
		contentHash: v.content_hash,
		createdAt: new Date(v.created_at).toISOString()
	};
}

// The versions of a model (members read).
export const GET = endpoint(async (event) => {
	const { project, resource } = await access(event, inAddress(event.params, 'model'));
	const m = await getModel(project.id, resource.id);
	const rows = await listVersions(m.id);
	return json({ model: { id: Number(m.id), name: m.name }, versions: rows.map(presentVersion) });
}) satisfies RequestHandler;

// Publish a version: { note, operatingPoints: [{ label, model }] }. 201 with the new version; 200 with
// the latest one when the content is identical to it (nothing created, nothing queued).
export const POST = endpoint(async (event) => {
	const { project, resource } = await access(event, inAddress(event.params, 'model'), 'writeModels');
	const body = await readJson(event);
	const r = await publishVersion(actorOf(event.locals), project.id, resource.id, body);
	return json(
		{
			...presentVersion(r.version),
			modelId: Number(r.version.model_id),
			operatingPoints: r.version.content.operatingPoints,
			created: r.created,
			runsQueued: r.queued
		},
		{ status: r.created ? 201 : 200 }
	);
}) satisfies RequestHandler;
