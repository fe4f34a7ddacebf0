// The trace graph's rules that do not need a canvas (pure, tested without a browser): which nodes
// the level and state filters leave, the layered layout's settings, how a label is wrapped, and how
// many edges cross in a drawing (the layout's measure of readability).

export interface GraphNode {
	id: string;
	kind: 'requirement' | 'model' | 'version';
	label: string;
	title: string;
	level?: string;
	/** A requirement's verification state (src/lib/verification's CombinedState). */
	verification?: string;
}
export interface GraphEdge {
	source: string;
	target: string;
	kind: string;
}
export interface Graph {
	nodes: GraphNode[];
	edges: GraphEdge[];
}

export interface GraphFilters {
	level?: string;
	state?: string;
}

/**
 * The nodes left by the filters: the requirements of that level and state, and the models and
 * versions those requirements are analysed with or specified on (a version brings its model).
 * Without filters, everything.
 */
export function visibleIds(graph: Graph, f: GraphFilters): Set<string> {
	const keep = new Set<string>();
	if (!f.level && !f.state) {
		for (const n of graph.nodes) keep.add(n.id);
		return keep;
	}
	for (const n of graph.nodes)
		if (
			n.kind === 'requirement' &&
			(!f.level || n.level === f.level) &&
			(!f.state || n.verification === f.state)
		)
			keep.add(n.id);
	for (const e of graph.edges)
		if ((e.kind === 'analysed-with' || e.kind === 'specified-on') && keep.has(e.source)) keep.add(e.target);
	for (const e of graph.edges) if (e.kind === 'version-of' && keep.has(e.source)) keep.add(e.target);
	return keep;
}

/**
 * Layered (Sugiyama-style) drawing by dagre: parents above what derives from them, each model
 * above its versions and the versions above the requirements analysed with them, and the order within each layer chosen to reduce crossings (K. Sugiyama, S. Tagawa, M. Toda,
 * "Methods for visual understanding of hierarchical system structures", IEEE Trans. SMC 11(2), 1981).
 * Edges point from the derived requirement to its parent, so the rank direction is bottom to top.
 */
export const LAYERED_LAYOUT = {
	name: 'dagre',
	rankDir: 'BT',
	nodeSep: 18,
	rankSep: 56,
	edgeSep: 8,
	ranker: 'network-simplex',
	nodeDimensionsIncludeLabels: true,
	fit: true,
	padding: 24,
	animate: false
} as const;

/** A name wrapped at word boundaries for the canvas (never cut; a long word stays whole). */
export function wrapLabel(text: string, perLine = 24): string {
	const lines: string[] = [];
	let line = '';
	for (const w of text.split(/\s+/).filter(Boolean)) {
		if (line && line.length + 1 + w.length > perLine) {
			lines.push(line);
			line = w;
		} else line = line ? `${line} ${w}` : w;
	}
	if (line) lines.push(line);
	return lines.join('\n');
}

type Point = { x: number; y: number };

/** Whether two segments cross at a point inside both. */
function cross(a: Point, b: Point, c: Point, d: Point): boolean {
	const o = (p: Point, q: Point, r: Point) =>
		Math.sign((q.x - p.x) * (r.y - p.y) - (q.y - p.y) * (r.x - p.x));
	return o(a, b, c) * o(a, b, d) < 0 && o(c, d, a) * o(c, d, b) < 0;
}

/** Edge crossings of a drawing with straight edges between node centres (edges sharing a node never count). */
export function countCrossings(positions: Record<string, Point>, edges: readonly GraphEdge[]): number {
	const segs = edges
		.filter((e) => positions[e.source] && positions[e.target])
		.map((e) => ({ e, a: positions[e.source], b: positions[e.target] }));
	let n = 0;
	for (let i = 0; i < segs.length; i++)
		for (let j = i + 1; j < segs.length; j++) {
			const s = segs[i];
			const t = segs[j];
			const shared = [s.e.source, s.e.target].some((x) => x === t.e.source || x === t.e.target);
			if (!shared && cross(s.a, s.b, t.a, t.b)) n++;
		}
	return n;
}
