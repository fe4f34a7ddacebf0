import cytoscape from 'cytoscape';
import dagre from 'cytoscape-dagre';
import { describe, expect, it } from 'vitest';
import {
	countCrossings,
	LAYERED_LAYOUT,
	visibleIds,
	wrapLabel,
	type Graph
} from '../../../src/lib/graph/trace-graph';

cytoscape.use(dagre);

// The trace graph's pure rules, and the layered layout run headless (cytoscape without a canvas).
const graph: Graph = {
	nodes: [
		{
			id: 'r1',
			kind: 'requirement',
			label: 'VX7-1',
			title: 'Pitch',
			level: 'system',
			verification: 'verified'
		},
		{
			id: 'r2',
			kind: 'requirement',
			label: 'VX7-2',
			title: 'Servo',
			level: 'subsystem',
			verification: 'blocked'
		},
		{ id: 'r3', kind: 'requirement', label: 'VX7-3', title: 'Loop', level: 'loop', verification: 'verified' },
		{ id: 'm1', kind: 'model', label: 'Elevon actuator, left outboard', title: '' },
		{ id: 'v1', kind: 'version', label: 'v1', title: 'version 1' },
		{ id: 'm2', kind: 'model', label: 'Rudder', title: '' }
	],
	edges: [
		{ source: 'r2', target: 'r1', kind: 'derived-from' },
		{ source: 'r3', target: 'r2', kind: 'derived-from' },
		{ source: 'r3', target: 'v1', kind: 'analysed-with' },
		{ source: 'v1', target: 'm1', kind: 'version-of' },
		{ source: 'r1', target: 'm2', kind: 'specified-on' }
	]
};

describe('graph filters', () => {
	it('keeps everything without filters', () => {
		expect(visibleIds(graph, {}).size).toBe(graph.nodes.length);
	});
	it('keeps the requirements of the level, with the versions and models they use', () => {
		expect([...visibleIds(graph, { level: 'loop' })].sort()).toEqual(['m1', 'r3', 'v1']);
	});
	it('filters by verification state, and by both', () => {
		expect([...visibleIds(graph, { state: 'verified' })].sort()).toEqual(['m1', 'm2', 'r1', 'r3', 'v1']);
		expect([...visibleIds(graph, { state: 'verified', level: 'system' })].sort()).toEqual(['m2', 'r1']);
		expect(visibleIds(graph, { state: 'pending' }).size).toBe(0);
	});
});

describe('labels', () => {
	it('wraps a long model name at word boundaries and never cuts it', () => {
		const w = wrapLabel('Elevon actuator, left outboard', 20);
		expect(w).toBe('Elevon actuator,\nleft outboard');
		expect(w.replace('\n', ' ')).toBe('Elevon actuator, left outboard');
	});
});

describe('edge crossings', () => {
	// Two edges forming an X cross once; edges meeting at a node do not cross (hand-drawn cases).
	it('counts an X once and a shared end point never', () => {
		const p = { a: { x: 0, y: 0 }, b: { x: 10, y: 10 }, c: { x: 0, y: 10 }, d: { x: 10, y: 0 } };
		expect(
			countCrossings(p, [
				{ source: 'a', target: 'b', kind: '' },
				{ source: 'c', target: 'd', kind: '' }
			])
		).toBe(1);
		expect(
			countCrossings(p, [
				{ source: 'a', target: 'b', kind: '' },
				{ source: 'a', target: 'd', kind: '' }
			])
		).toBe(0);
	});

	// A tree drawn with its children in an interleaved order has crossings; any tree has a drawing in
	// layers without any (each parent's children side by side), which the layered layout must find.
	it('the layered layout draws a tree with children given interleaved without crossings', () => {
		const nodes: Graph['nodes'] = [];
		const edges: Graph['edges'] = [];
		for (let p = 0; p < 4; p++) nodes.push({ id: `p${p}`, kind: 'requirement', label: `P${p}`, title: '' });
		// children listed p0, p1, p2, p3, p0, p1, ... so an order by listing interleaves them
		for (let c = 0; c < 16; c++) {
			nodes.push({ id: `c${c}`, kind: 'requirement', label: `C${c}`, title: '' });
			edges.push({ source: `c${c}`, target: `p${c % 4}`, kind: 'derived-from' });
		}
		const naive: Record<string, { x: number; y: number }> = {};
		nodes.forEach(
			(n, i) => (naive[n.id] = n.id.startsWith('p') ? { x: i * 100, y: 0 } : { x: (i - 4) * 25, y: 100 })
		);
		expect(countCrossings(naive, edges)).toBeGreaterThan(10);

		const cy = cytoscape({
			headless: true,
			styleEnabled: true,
			elements: [...nodes.map((n) => ({ data: n })), ...edges.map((e) => ({ data: e }))],
			style: [{ selector: 'node', style: { width: 60, height: 30 } }]
		});
		cy.layout(LAYERED_LAYOUT as unknown as cytoscape.LayoutOptions).run();
		const placed: Record<string, { x: number; y: number }> = {};
		cy.nodes().forEach((n) => {
			placed[n.id()] = n.position();
		});
		expect(countCrossings(placed, edges)).toBe(0);
		// Parents above the requirements derived from them (rank direction bottom to top).
		for (const e of edges) expect(placed[e.source].y).toBeGreaterThan(placed[e.target].y);
	});
});
