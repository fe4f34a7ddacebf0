// npm run bench: each section measures one thing end to end and prints its figure against its target.
//   npm run bench                 every section
//   npm run bench -- upload       only the sections named
import { useLocalEnv } from './lib/local-env';

// Scratch databases are made in npm start's private cluster (started when it is not running).
useLocalEnv('start');

type Section = () => Promise<{
	name: string;
	figure: string;
	target: string;
	ok: boolean;
	details: Record<string, number | string>;
}>;

const sections: Record<string, Section> = {
	// Loaded when run, so one section's module does not hold up the others.
	// Exact circle check vs a 10,000-point grid, orders 2..30, on a lightly damped case (prints a table).
	engine: async () => (await import('./bench/engine')).engineSection(),
	// Discrete circle, largest sector and Tsypkin at orders 4, 10, 20 vs a 10,000-point grid (issue 17).
	discrete: async () => (await import('./bench/discrete')).discreteSection(),
	// Multivariable circle check at orders 4, 10, 20 with p = 2, 3 vs a 10,000-point grid of its minors.
	mimo: async () => (await import('./bench/mimo')).mimoSection(),
	reverify: async () => (await import('./bench/reverify')).reverifySection(),
	upload: async () => (await import('./bench/upload')).uploadSection(),
	// 10,000 generated requirements: trace-matrix API, XLSX export, the matrix page in Chromium.
	trace: async () => (await import('./bench/trace')).traceSection(),
	// 10,000 generated requirements exported as ReqIF, then previewed and imported into an empty project.
	import: async () => (await import('./bench/interchange')).importSection(),
	// The data package (report + archive) of a 500-requirement baseline with plots.
	package: async () => (await import('./bench/package')).packageSection()
};

const wanted = process.argv.slice(2).filter((a) => !a.startsWith('-'));
const unknown = wanted.filter((w) => !(w in sections));
if (unknown.length) {
	console.error(
		`no bench section ${unknown.join(', ')}; the sections are: ${Object.keys(sections).join(', ')}`
	);
	process.exit(2);
}
let failed = 0;
for (const [key, run] of Object.entries(sections)) {
	if (wanted.length && !wanted.includes(key)) continue;
	try {
		const r = await run();
		if (!r.ok) failed++;
		console.log(`${r.ok ? 'ok  ' : 'MISS'} ${r.name}: ${r.figure} (target: ${r.target})`);
		console.log('     ' + JSON.stringify(r.details));
	} catch (e) {
		failed++;
		console.log(`FAIL ${key}: ${(e as Error).message}`);
	}
}
process.exit(failed ? 1 : 0);
