import { access } from '$lib/server/auth';
import { traceGraph } from '$lib/server/analyses/service';
import { matrixQuery } from '$lib/server/trace/schema';
import { matrixAll } from '$lib/server/trace/service';
import type { PageServerLoad } from './$types';

export const load = (async (event) => {
	const { project } = await access(event, { project: event.params.key });
	const [graph, rows] = await Promise.all([
		traceGraph(project.id, project.key),
		matrixAll(project.id, matrixQuery.parse({}))
	]);
	// Each requirement carries its one verification state, as the matrix shows it.
	const byNode = new Map(rows.map((r) => [`r${r.id}`, r]));
	return {
		project: { key: project.key, name: project.name },
		graph: {
			edges: graph.edges,
			nodes: graph.nodes.map((n) => {
				const r = byNode.get(n.id);
				return r ? { ...n, verification: r.state, verificationLabel: r.stateLabel } : n;
			})
		}
	};
}) satisfies PageServerLoad;
