import { ENGINE_VERSION } from '../../stability/index';
import { db } from '../db';
import { ServiceError } from '../errors';
import { currentSpec, graphRows, requirementProject, runs, runsOfModelVersion, type RunRow } from './repo';
import { analysisStates, type AnalysisStateInfo } from '../verification/service';

// Reading analysis runs: what the requirement page, the API and the trace graph show.

/** A run as the API and the pages show it. */
export function presentRun(r: Omit<RunRow, 'curves'> & { curves?: unknown }, withCurves = false) {
	return {
		id: Number(r.id),
		requirementId: Number(r.requirement_id),
		requirementRevision: r.requirement_revision,
		specId: Number(r.spec_id),
		model: {
			id: Number(r.model_id),
			name: r.model_name,
			version: r.model_version,
			versionId: Number(r.model_version_id),
			hash: r.model_hash
		},
		engineVersion: r.engine_version,
		status: r.status,
		verdict: r.verdict,
		result: r.result,
		worstPoint: r.worst_point,
		error: r.error,
		outputHash: r.output_hash,
		trigger: { kind: r.trigger, ref: r.trigger_ref, by: r.triggered_by_name ?? null },
		attempts: r.attempts,
		queuedAt: new Date(r.queued_at).toISOString(),
		startedAt: r.started_at ? new Date(r.started_at).toISOString() : null,
		finishedAt: r.finished_at ? new Date(r.finished_at).toISOString() : null,
		durationMs: r.duration_ms,
		...(withCurves ? { curves: r.curves ?? null } : {})
	};
}
export type PresentedRun = ReturnType<typeof presentRun>;

export interface RequirementAnalyses {
	requirementId: number;
	projectKey: string;
	engineVersion: string;
	state: AnalysisStateInfo;
	spec: Awaited<ReturnType<typeof currentSpec>> | null;
	runs: PresentedRun[];
	/** The newest finished run, with its curves. */
	latest: PresentedRun | null;
	/** Runs of this requirement still queued or running. */
	pending: number;
}

export async function requirementAnalyses(
	requirementId: number,
	projectKey?: string
): Promise<RequirementAnalyses> {
	const [project, rows, states, spec] = await Promise.all([
		projectKey ? { project_key: projectKey } : requirementProject(db(), requirementId),
		runs.forRequirement(db(), requirementId),
		analysisStates(db(), [requirementId]),
		currentSpec(db(), requirementId)
	]);
	const finished = rows.find((r) => r.status === 'done' || r.status === 'error');
	const latest = finished ? await runs.byId(db(), Number(finished.id)) : undefined;
	return {
		requirementId,
		projectKey: project?.project_key ?? '',
		engineVersion: ENGINE_VERSION,
		state: states.get(requirementId) ?? { state: 'not-analysed' },
		spec: spec ?? null,
		runs: rows.map((r) => presentRun(r)),
		latest: latest ? presentRun(latest, true) : null,
		pending: rows.filter((r) => r.status === 'queued' || r.status === 'running').length
	};
}

export async function getRun(runId: number) {
	const r = await runs.byId(db(), runId);
	if (!r) throw new ServiceError(404, `There is no analysis run ${runId}.`);
	return presentRun(r, true);
}

/** The runs that used one model version, one row per requirement (its newest run with that version). */
export async function runsForModelVersion(modelVersionId: number) {
	const rows = await runsOfModelVersion(db(), modelVersionId);
	return rows.map((r) => ({
		runId: Number(r.id),
		requirementId: Number(r.requirement_id),
		identifier: r.identifier,
		status: r.status,
		verdict: r.verdict,
		worstPoint: r.worst_point,
		finishedAt: r.finished_at ? new Date(r.finished_at).toISOString() : null
	}));
}

/** Nodes and edges of a project's trace graph: requirements (with their analysis state), derived-from links, models, versions. */
export async function traceGraph(projectId: number, projectKey: string) {
	const { reqs, links, mods, vers } = await graphRows(db(), projectId);
	const states = await analysisStates(
		db(),
		reqs.map((r) => Number(r.id))
	);
	const nodes: {
		id: string;
		kind: 'requirement' | 'model' | 'version';
		label: string;
		title: string;
		state?: string;
		status?: string;
		level?: string;
		href: string;
	}[] = [];
	const edges: {
		id: string;
		source: string;
		target: string;
		kind: 'derived-from' | 'analysed-with' | 'version-of' | 'specified-on';
	}[] = [];
	for (const m of mods)
		nodes.push({
			id: `m${m.id}`,
			kind: 'model',
			label: m.name,
			title: m.name,
			href: `/p/${projectKey}/models/${m.id}`
		});
	for (const v of vers) {
		nodes.push({
			id: `v${v.id}`,
			kind: 'version',
			label: `v${v.version}`,
			title: `version ${v.version}, SHA-256 ${v.content_hash.slice(0, 12)}`,
			href: `/p/${projectKey}/models/${v.model_id}/v/${v.version}`
		});
		edges.push({ id: `e-v${v.id}`, source: `v${v.id}`, target: `m${v.model_id}`, kind: 'version-of' });
	}
	for (const r of reqs) {
		const st = states.get(Number(r.id));
		nodes.push({
			id: `r${r.id}`,
			kind: 'requirement',
			label: r.identifier,
			title: r.title,
			state: st?.state ?? 'not-analysed',
			status: r.status,
			level: r.level,
			href: `/p/${projectKey}/requirements/${r.id}`
		});
		if (st?.modelVersionId)
			edges.push({
				id: `e-r${r.id}`,
				source: `r${r.id}`,
				target: `v${st.modelVersionId}`,
				kind: 'analysed-with'
			});
		else if (r.model_id)
			edges.push({ id: `e-r${r.id}`, source: `r${r.id}`, target: `m${r.model_id}`, kind: 'specified-on' });
	}
	for (const l of links)
		edges.push({
			id: `e-l${l.child_id}-${l.parent_id}`,
			source: `r${l.child_id}`,
			target: `r${l.parent_id}`,
			kind: 'derived-from'
		});
	return { nodes, edges };
}
