// A model version's input problems in the user's words: the engine's zod paths
// ("operatingPoints.0.model.den") become "Operating point 1 (hover), denominator". Used by the
// publish form's action and by its live preview, so both name a place the same way. Machine clients
// (the API) keep the paths.

const KEYS: Record<string, string> = {
	label: 'label',
	model: 'model',
	kind: 'model kind',
	num: 'numerator',
	den: 'denominator',
	zeros: 'zeros',
	poles: 'poles',
	gain: 'gain',
	A: 'matrix A',
	B: 'matrix B',
	C: 'matrix C',
	D: 'matrix D',
	expression: 'transfer function',
	note: 'note',
	format: 'format',
	operatingPoints: 'operating points'
};

const ordinal = (i: number) => String(i + 1);

/** The words for the part of one model at `path` (relative to the model: ["den", 2]). */
function modelPart(path: (string | number)[]): string[] {
	const out: string[] = [];
	let i = 0;
	while (i < path.length) {
		const key = String(path[i]);
		const next = path[i + 1];
		const idx = typeof next === 'number' || /^\d+$/.test(String(next ?? '')) ? Number(next) : null;
		if ((key === 'num' || key === 'den') && idx !== null) {
			out.push(`${KEYS[key]} coefficient ${ordinal(idx)}`);
			i += 2;
		} else if ((key === 'zeros' || key === 'poles') && idx !== null) {
			const part = path[i + 2];
			const which =
				part === 0 || part === '0' ? ', real part' : part === 1 || part === '1' ? ', imaginary part' : '';
			out.push(`${key === 'zeros' ? 'zero' : 'pole'} ${ordinal(idx)}${which}`);
			i += which ? 3 : 2;
		} else if (/^[ABCD]$/.test(key) && idx !== null) {
			const col = path[i + 2];
			const colIdx = typeof col === 'number' || /^\d+$/.test(String(col ?? '')) ? Number(col) : null;
			out.push(`matrix ${key}, row ${ordinal(idx)}${colIdx !== null ? `, column ${ordinal(colIdx)}` : ''}`);
			i += colIdx !== null ? 3 : 2;
		} else {
			out.push(KEYS[key] ?? key);
			i += 1;
		}
	}
	return out;
}

/** A dotted or array path as its parts ("operatingPoints.0.model.den" -> ["operatingPoints", 0, "model", "den"]). */
export function pathParts(path: string | readonly (string | number | symbol)[]): (string | number)[] {
	const parts = typeof path === 'string' ? path.split(/[.[\]]+/).filter(Boolean) : [...path];
	return parts.map((p) => (typeof p === 'number' ? p : /^\d+$/.test(String(p)) ? Number(p) : String(p)));
}

/**
 * The place named in words. `points` is what was submitted (the parsed operating points, if any), so an
 * operating point is named by its label as well as its number.
 */
export function modelPathInWords(
	path: string | readonly (string | number | symbol)[],
	points?: unknown
): string {
	const parts = pathParts(path);
	if (parts[0] === 'operatingPoints') parts.shift();
	if (parts.length === 0 || parts[0] === '_') return 'The operating points';
	if (typeof parts[0] === 'number') {
		const n = parts[0];
		const label = Array.isArray(points) ? (points[n] as { label?: unknown } | undefined)?.label : undefined;
		const head = `Operating point ${ordinal(n)}${typeof label === 'string' && label.trim() ? ` (${label.trim()})` : ''}`;
		let rest = parts.slice(1);
		if (rest[0] === 'model' && rest.length > 1) rest = rest.slice(1);
		return [head, ...modelPart(rest)].join(', ');
	}
	const words = modelPart(parts).join(', ');
	return words.charAt(0).toUpperCase() + words.slice(1);
}

/** One line per problem, "place: reason", each place once (the first reason found for it). */
export function modelIssuesInWords(fields: Record<string, string>, points?: unknown): string[] {
	const seen = new Set<string>();
	const out: string[] = [];
	for (const [path, message] of Object.entries(fields)) {
		const place = modelPathInWords(path, points);
		if (seen.has(place)) continue;
		seen.add(place);
		out.push(`${place}: ${message}`);
	}
	return out;
}
