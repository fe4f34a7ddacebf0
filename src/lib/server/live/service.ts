import { db } from '../db';
import { projectChange } from './repo';

// Live pages. An open page (requirement, requirement list, trace matrix) asks GET
// /api/v1/projects/{key}/live every few seconds and re-reads its own data when the stamp moved.
//
// The stamp is the project's newest audit event plus its count of open analysis runs. Every change that
// can move a shown state writes its audit event in the transaction of the change (a specification save,
// a requirement revision or link, a model publish, an evidence upload or review, a run's verdict), and
// the audit chain is appended under one lock, so the newest event moves exactly when such a change
// commits. The open-run count covers runs queued without a project event (a new engine version) and
// makes "pending" visible from the commit that queued a run until the one that finished it.
//
// Polling, not server-sent events: under scripts/serve.js (node:cluster) a page's requests land on any
// process, so a poll needs no per-process listener, holds no database connection per process, loses
// nothing while PostgreSQL or an app process restarts (a LISTEN connection would drop notifications until
// it reconnected), keeps no long response open to delay a graceful shutdown, and does not pin one of the
// browser's six HTTP/1.1 connections per open tab.

export interface LiveStamp {
	/** Compare for equality only: any difference means "read again". */
	stamp: string;
	/** Analysis runs of the project queued or running. */
	pending: number;
}

export async function projectStamp(projectId: number): Promise<LiveStamp> {
	const { seq, pending } = await projectChange(db(), projectId);
	return { stamp: `${seq}.${pending}`, pending };
}
