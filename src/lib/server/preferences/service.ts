import { DEFAULT_COLUMNS, type ChoosableColumn } from '../../trace/columns';
import { db } from '../db';
import * as repo from './repo';
import { traceColumns, type TraceColumns } from './schema';

// A person's own view of a project: kept per user and project on the server, so it follows them
// from one browser to the next. Not audited: it changes nothing anyone else sees.

const TRACE_COLUMNS = 'trace-columns';

/** The trace-matrix columns this person chose in this project (the defaults until they choose). */
export async function traceColumnsOf(userId: number, projectId: number): Promise<ChoosableColumn[]> {
	const stored = traceColumns.safeParse(await repo.read(db(), userId, projectId, TRACE_COLUMNS));
	// A stored choice naming a column that no longer exists falls back to the defaults.
	return stored.success ? stored.data.columns : [...DEFAULT_COLUMNS];
}

export async function chooseTraceColumns(
	userId: number,
	projectId: number,
	choice: TraceColumns
): Promise<ChoosableColumn[]> {
	await repo.write(db(), userId, projectId, TRACE_COLUMNS, choice);
	return choice.columns;
}
