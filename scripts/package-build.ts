// Builds one data package in a process of its own (the worker starts it for each package job):
//   tsx scripts/package-build.ts <package id>
// A build holds a large project's curves and pages for a while; in its own process with a capped heap
// (the worker passes --max-old-space-size) it cannot push the worker's memory, and the memory is given
// back when it ends. Exit code 0 when the package's record was written (done or failed), 1 otherwise.
import { closeDb } from '../src/lib/server/db';
import { stopBoss } from '../src/lib/server/jobs/boss';
import { buildPackage } from '../src/lib/server/packages/service';

const id = Number(process.argv[2]);
let code = 0;
try {
	await buildPackage(id);
} catch (e) {
	console.error(`[package ${id}]`, e);
	code = 1;
}
await stopBoss().catch(() => {});
await closeDb().catch(() => {});
process.exit(code);
