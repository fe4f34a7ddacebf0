import { fail, redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { ServiceError } from '$lib/server/errors';
import { formatBytes } from '$lib/server/evidence/upload';
import { formatOf } from '$lib/server/interchange/schema';
import { listImports, previewImport } from '$lib/server/interchange/service';
import { receiveImport } from '$lib/server/interchange/upload';
import { STATUS_NOT_APPLIED } from '$lib/requirements/interchange';
import type { Actions, PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project, can } = await access(event, { project: event.params.key });
	const imports = (await listImports(project.id)).map((i) => ({
		id: Number(i.id),
		format: i.format,
		fileName: i.file_name,
		status: i.status,
		counts: i.counts,
		by: i.by,
		at: new Date(i.created_at).toISOString()
	}));
	return {
		project: { key: project.key, name: project.name },
		can,
		imports,
		maxText: formatBytes(config.importMaxBytes),
		statusRule: STATUS_NOT_APPLIED
	};
}) satisfies PageServerLoad;

export const actions = {
	upload: async (event) => {
		const { project } = await access(event, { project: event.params.key }, 'writeRequirements');
		let id: number;
		try {
			const { fields, file } = await receiveImport(
				event.request.headers,
				event.request.body,
				config.importMaxBytes
			);
			if (!file || file.bytes.length === 0) {
				throw new ServiceError(400, 'Choose a file to import.', { file: 'Choose a file to import.' });
			}
			const format = formatOf(fields.format || undefined, file.name);
			if (!format) {
				throw new ServiceError(400, 'Choose the format: ReqIF, XLSX or CSV.', {
					format: 'Name the file .reqif, .xlsx or .csv, or choose the format.'
				});
			}
			id = (await previewImport(actorOf(event.locals), project, format, file, null)).id;
		} catch (e) {
			if (e instanceof ServiceError) {
				return fail(e.status, { action: 'upload', errors: { ...e.fields, _: e.message } });
			}
			throw e;
		}
		redirect(303, `/p/${project.key}/imports/${id}`);
	}
} satisfies Actions;
