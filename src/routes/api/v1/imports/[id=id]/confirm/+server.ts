import { json } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { confirmImport } from '$lib/server/interchange/service';
import type { RequestHandler } from './$types';

// Apply a preview (engineers): 200 with what changed, 409 when the project changed since the preview
// (or it was confirmed already), 422 while the preview has problems.
export const POST = endpoint(async (event) => {
	const { project, resource } = await access(event, { import: Number(event.params.id) }, 'writeRequirements');
	const result = await confirmImport(actorOf(event.locals), project, resource.id);
	return json({ id: resource.id, status: 'confirmed', ...result });
}) satisfies RequestHandler;
