import type { Db } from '../db';

// SQL only. Baselines are insert-only: the database refuses UPDATE and DELETE.

export interface BaselineRow {
	id: number;
	project_id: number;
	number: number;
	label: string;
	note: string;
	manifest: unknown;
	manifest_hash: string;
	engine_version: string;
	requirement_count: number;
	created_by: number | null;
	created_by_label: string;
	created_at: Date;
}

export type BaselineSummary = Omit<BaselineRow, 'manifest'>;

const SUMMARY = [
	'id',
	'project_id',
	'number',
	'label',
	'note',
	'manifest_hash',
	'engine_version',
	'requirement_count',
	'created_by',
	'created_by_label',
	'created_at'
];

export const baselines = {
	list: (db: Db, projectId: number) =>
		db('baselines').where({ project_id: projectId }).orderBy('number', 'desc').select(SUMMARY) as Promise<
			BaselineSummary[]
		>,
	byId: (db: Db, projectId: number, id: number) =>
		db<BaselineRow>('baselines').where({ project_id: projectId, id }).first(),
	summary: (db: Db, projectId: number, id: number) =>
		db('baselines').where({ project_id: projectId, id }).first(SUMMARY) as Promise<
			BaselineSummary | undefined
		>,
	/** The latest baseline of the project whose manifest has this SHA-256 (nothing changed since it). */
	withHash: (db: Db, projectId: number, hash: string) =>
		db('baselines')
			.where({ project_id: projectId, manifest_hash: hash })
			.orderBy('number', 'desc')
			.first(SUMMARY) as Promise<BaselineSummary | undefined>,
	/** Lock the project so two freezes number their baselines one after the other. */
	nextNumber: async (db: Db, projectId: number): Promise<number> => {
		await db('projects').where({ id: projectId }).forUpdate().first('id');
		const r = await db('baselines').where({ project_id: projectId }).max('number as n').first();
		return Number(r?.n ?? 0) + 1;
	},
	insert: async (db: Db, row: Omit<BaselineRow, 'id' | 'created_at' | 'manifest'> & { manifest: string }) =>
		(await db('baselines').insert(row).returning(SUMMARY))[0] as BaselineSummary
};
