// Seeds the demo scenario when the database is empty (npm start runs it; safe to run again).
import { closeDb, db } from '../src/lib/server/db';
import { seedDemoEvidence } from '../src/lib/server/demo/evidence';
import { seedDemo } from '../src/lib/server/demo/seed';
import { useLocalEnv } from './lib/local-env';

useLocalEnv();

const seeded = await seedDemo(db());
console.log(seeded ? '[seed] demo scenario VX7 seeded' : '[seed] database not empty: demo seed skipped');
// Evidence needs the object store; without it the demo has no evidence rather than no demo.
try {
	const n = await seedDemoEvidence(db());
	if (n) console.log(`[seed] ${n} demo evidence items uploaded`);
} catch (e) {
	console.warn(`[seed] demo evidence skipped: ${(e as Error).message}`);
}
// Fresh rows have no planner statistics until autovacuum gets round to them (small tables: never), and
// the trace-matrix query plans badly without them. PostgreSQL's advice after a bulk load: ANALYZE.
await db().raw('analyze');
await closeDb();
