import { json } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { ServiceError } from '$lib/server/errors';
import { formatOf, parseMapping } from '$lib/server/interchange/schema';
import { listImports, previewImport } from '$lib/server/interchange/service';
import { receiveImport } from '$lib/server/interchange/upload';
import { STATUS_NOT_APPLIED } from '$lib/requirements/interchange';
import type { RequestHandler } from './$types';

// Imports of a project. POST (engineers): multipart `file`, `format` (reqif, xlsx, csv; else from the
// file's extension), optional `mapping` (JSON). 201 with the preview; nothing else changes.
export const GET = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! });
	return json({ imports: await listImports(project.id) });
}) satisfies RequestHandler;

export const POST = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! }, 'writeRequirements');
	const { fields, file } = await receiveImport(
		event.request.headers,
		event.request.body,
		config.importMaxBytes
	);
	if (!file)
		throw new ServiceError(400, 'Send the file in a part named "file".', {
			file: 'Choose a file to import.'
		});
	const format = formatOf(fields.format, file.name);
	if (!format) {
		throw new ServiceError(
			400,
			'format is one of reqif, xlsx, csv (or name the file .reqif, .xlsx or .csv).',
			{
				format: 'One of reqif, xlsx, csv.'
			}
		);
	}
	const m = parseMapping(format, fields.mapping);
	if (m && 'error' in m) throw new ServiceError(400, m.error!, { mapping: m.error! });
	const v = await previewImport(actorOf(event.locals), project, format, file, m?.mapping ?? null);
	return json(apiPreview(v), { status: 201 });
}) satisfies RequestHandler;

function apiPreview(v: Awaited<ReturnType<typeof previewImport>>) {
	return {
		id: v.id,
		status: v.status,
		format: v.format,
		counts: v.counts,
		problems: v.problems,
		// A file's status is information, never applied (imported requirements are drafts).
		statusRule: STATUS_NOT_APPLIED,
		mapping: v.mapping,
		requirements: v.items.map((i) => ({
			identifier: i.identifier || null,
			objectId: i.objectId,
			row: i.row,
			action: i.action,
			changed: i.changedFields,
			specification: i.specChanged,
			links: i.newParents.map((p) => p.identifier),
			fileStatus: i.fileStatus,
			willBe: i.willBe,
			statusNote: i.statusNote
		}))
	};
}
