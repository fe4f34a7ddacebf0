import { describe, expect, it } from 'vitest';
import { CELL_W, layeredPositions, type Graph } from '../../../src/lib/graph/layered-layout';

// The trace graph's layered layout at the size the page must stay readable at: 200 requirements.
function graph(n: number): Graph {
	const nodes: Graph['nodes'] = [];
	const edges: Graph['edges'] = [];
	for (let i = 0; i < n; i++) {
		nodes.push({ id: `r${i}`, kind: 'requirement' });
		// 10 top-level, 40 derived from them, the rest derived from those.
		if (i >= 10)
			edges.push({ source: `r${i}`, target: `r${i < 50 ? i % 10 : 10 + (i % 40)}`, kind: 'derived-from' });
	}
	nodes.push({ id: 'm1', kind: 'model' }, { id: 'v1', kind: 'version' }, { id: 'v2', kind: 'version' });
	edges.push(
		{ source: 'v1', target: 'm1', kind: 'version-of' },
		{ source: 'v2', target: 'm1', kind: 'version-of' }
	);
	return { nodes, edges };
}

describe('layeredPositions', () => {
	const g = graph(200);
	const width = 1366;
	const { positions, height } = layeredPositions(g, width);

	it('places every node in its own cell within the width', () => {
		const seen = new Set<string>();
		for (const n of g.nodes) {
			const p = positions[n.id];
			expect(p, n.id).toBeDefined();
			expect(p.x).toBeGreaterThan(0);
			expect(p.x).toBeLessThan(width);
			const key = `${Math.round(p.x)},${Math.round(p.y)}`;
			expect(seen.has(key), `${n.id} overlaps another node`).toBe(false);
			seen.add(key);
		}
		// Neighbours in a row are a full cell apart, so labels of about 20 characters do not collide.
		const row0 = g.nodes
			.slice(0, 10)
			.map((n) => positions[n.id].x)
			.sort((a, b) => a - b);
		for (let i = 1; i < row0.length; i++) expect(row0[i] - row0[i - 1]).toBeCloseTo(CELL_W, 6);
		expect(height).toBeGreaterThan(Math.max(...Object.values(positions).map((p) => p.y)));
	});

	it('puts parents above the requirements derived from them, and models below all requirements', () => {
		for (const e of g.edges.filter((x) => x.kind === 'derived-from'))
			expect(positions[e.source].y).toBeGreaterThan(positions[e.target].y);
		const lowestRequirement = Math.max(
			...g.nodes.filter((n) => n.kind === 'requirement').map((n) => positions[n.id].y)
		);
		expect(positions.m1.y).toBeGreaterThan(lowestRequirement);
		expect(positions.v1.y).toBeGreaterThan(positions.m1.y);
	});
});
