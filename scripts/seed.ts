// Seeds the demo scenario when the database is empty (npm start runs it; safe to run again).
import { closeDb, db } from '../src/lib/server/db';
import { seedDemo } from '../src/lib/server/demo/seed';

const seeded = await seedDemo(db());
console.log(seeded ? '[seed] demo scenario VX7 seeded' : '[seed] database not empty: demo seed skipped');
await closeDb();
