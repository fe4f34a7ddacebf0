// Command-line analysis: npm run --silent analyze -- case.json
// Reads { "model": <model> | "operatingPoints": [{ "label", "model" }], "checks": [ ... ] } and prints
// { "engineVersion", "results": [ ... ] } on stdout, one result per check in order.
// Exit codes: 0 analysed (whatever the verdicts), 2 invalid input (message on stderr), 1 internal error.
// The case is validated once (src/lib/stability/schema.ts): unknown fields are refused, an infinite upper
// bound is null / "Infinity" / "inf", and every message names its place ("checks[1].sector[1]: ...").
import { readFileSync } from 'node:fs';
import { ENGINE_VERSION, ModelInputError, analyzeCase } from '../src/lib/stability/index';
import { useLocalEnv } from './lib/local-env';

// The engine alone: no database (the shared helper only fills in npm start's defaults).
useLocalEnv('none');

function fail(message: string, code: number): never {
	process.stderr.write(message.endsWith('\n') ? message : message + '\n');
	process.exit(code);
}

const args = process.argv.slice(2).filter((a) => a !== '--');
if (args.length !== 1)
	fail('usage: npm run --silent analyze -- case.json   (use - to read standard input)', 2);
const file = args[0];
let text: string;
try {
	text = file === '-' ? readFileSync(0, 'utf8') : readFileSync(file, 'utf8');
} catch (e) {
	fail(`cannot read ${file}: ${(e as Error).message}`, 2);
}
let input: unknown;
try {
	input = JSON.parse(text);
} catch (e) {
	fail(`${file}: not valid JSON: ${(e as Error).message}`, 2);
}
try {
	const out = analyzeCase(input);
	process.stdout.write(JSON.stringify({ engineVersion: ENGINE_VERSION, ...out }, null, 2) + '\n');
} catch (e) {
	if (e instanceof ModelInputError) {
		fail(['invalid input:', ...e.issues.map((i) => `  ${i.path || '(case)'}: ${i.message}`)].join('\n'), 2);
	}
	fail(`internal error: ${(e as Error).stack ?? String(e)}`, 1);
}
