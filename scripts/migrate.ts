/** Applies the migrations in drizzle/ to DATABASE_URL. Safe to repeat. */
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import { db, closeDb } from '../src/lib/server/db/index';

await migrate(db, { migrationsFolder: new URL('../drizzle', import.meta.url).pathname });
await closeDb();
console.log('[escapement] migrations applied');
