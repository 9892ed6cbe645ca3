/**
 * Applies the migrations in drizzle/ to DATABASE_URL and creates pg-boss's schema and queues, as the owner of the
 * database (the app and the workers may connect as a role that cannot create schemas). Safe to repeat.
 */
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import { db, closeDb } from '../src/lib/server/db/index';
import { getBoss, stopJobs } from '../src/lib/server/jobs/index';

await migrate(db, { migrationsFolder: new URL('../drizzle', import.meta.url).pathname });
await getBoss();
await stopJobs();
await closeDb();
console.log('[escapement] migrations applied');
