import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { getImport } from '$lib/server/interchange/service';
import type { RequestHandler } from './$types';

// One import: its preview, status and progress (members of its project).
export const GET = endpoint(async (event) => {
	const { resource } = await access(event, { import: Number(event.params.id) });
	const v = await getImport(resource.id);
	return json({
		id: v.id,
		status: v.status,
		format: v.format,
		fileName: v.fileName,
		counts: v.counts,
		problems: v.problems,
		progress: v.progress,
		result: v.result
	});
}) satisfies RequestHandler;
