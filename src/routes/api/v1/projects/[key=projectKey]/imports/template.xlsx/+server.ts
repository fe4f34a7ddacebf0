import { endpoint } from '$lib/server/api';
import { access } from '$lib/server/auth';
import { templateWorkbook } from '$lib/server/interchange/sheets';
import type { RequestHandler } from './$types';

// The spreadsheet template for imports (members).
export const GET = endpoint(async (event) => {
	await access(event, { project: event.params.key! });
	return new Response(new Uint8Array(await templateWorkbook()), {
		headers: {
			'content-type': 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
			'content-disposition': 'attachment; filename="requirements-import-template.xlsx"',
			'cache-control': 'no-store'
		}
	});
}) satisfies RequestHandler;
