import { endpoint } from '$lib/server/api';
import { packageDownload } from '$lib/server/packages/http';
import type { RequestHandler } from './$types';

// The finished package's report (members; recorded as an export).
export const GET = endpoint((event) => packageDownload(event, 'report')) satisfies RequestHandler;
