// npm run audit:verify — walks the audit chain and names the first broken link (exit 1 when broken).
import { verifyChain } from '../src/lib/server/audit';
import { closeDb, db } from '../src/lib/server/db';
import { useLocalEnv } from './lib/local-env';

useLocalEnv();

const r = await verifyChain(db());
if (r.ok) console.log(`audit trail intact: ${r.count} events`);
else console.error(`audit trail BROKEN at event #${r.brokenAt}: ${r.reason} (${r.count} events read)`);
await closeDb();
process.exit(r.ok ? 0 : 1);
