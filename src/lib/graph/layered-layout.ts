// Preset positions for the trace graph's layered layout.
export interface Graph {
	nodes: { id: string; kind: 'requirement' | 'model' | 'version' }[];
	edges: { source: string; target: string; kind: string }[];
}

// Layers: requirements by derivation depth (top-level first), each layer wrapped into rows that fit
// the width, then the models with their versions. At 200 nodes this stays readable at zoom 1 (the
// canvas grows downwards and the page scrolls) instead of shrinking everything to fit.
export const CELL_W = 124;
export const CELL_H = 62;
export function layeredPositions(
	graph: Graph,
	width: number
): { positions: Record<string, { x: number; y: number }>; height: number } {
	const nodes = graph.nodes;
	const parents = new Map<string, string[]>();
	for (const e of graph.edges)
		if (e.kind === 'derived-from') parents.set(e.source, [...(parents.get(e.source) ?? []), e.target]);
	const depth = new Map<string, number>();
	const depthOf = (id: string, seen = new Set<string>()): number => {
		if (depth.has(id)) return depth.get(id)!;
		if (seen.has(id)) return 0;
		seen.add(id);
		const ps = parents.get(id) ?? [];
		const d = ps.length ? 1 + Math.max(...ps.map((p) => depthOf(p, seen))) : 0;
		depth.set(id, d);
		return d;
	};
	const layers: string[][] = [];
	for (const n of nodes.filter((x) => x.kind === 'requirement')) (layers[depthOf(n.id)] ??= []).push(n.id);
	const cols = Math.max(4, Math.floor((width - 40) / CELL_W));
	const positions: Record<string, { x: number; y: number }> = {};
	let row = 0;
	const place = (ids: string[]) => {
		ids.forEach((id, i) => {
			const inRow = Math.min(cols, ids.length - Math.floor(i / cols) * cols);
			const offset = ((cols - inRow) * CELL_W) / 2;
			positions[id] = {
				x: 20 + CELL_W / 2 + offset + (i % cols) * CELL_W,
				y: 30 + (row + Math.floor(i / cols)) * CELL_H
			};
		});
		row += Math.ceil(ids.length / cols) + 0.4;
	};
	for (const layer of layers) if (layer?.length) place(layer);
	const models = nodes.filter((x) => x.kind === 'model');
	const versionsOf = (m: string) =>
		graph.edges.filter((e) => e.kind === 'version-of' && e.target === m).map((e) => e.source);
	// Each model heads a column of its versions.
	row += 0.3;
	models.forEach((m, i) => {
		const x = 20 + CELL_W / 2 + (i % cols) * CELL_W;
		const base = row + Math.floor(i / cols) * 4;
		positions[m.id] = { x, y: 30 + base * CELL_H };
		versionsOf(m.id).forEach(
			(v, j) => (positions[v] = { x: x + (j % 2 ? 22 : -22), y: 30 + (base + 0.8 + j * 0.5) * CELL_H })
		);
	});
	const rowsUsed = row + Math.ceil(models.length / cols) * 4;
	return { positions, height: Math.max(480, 60 + rowsUsed * CELL_H) };
}
