/**
 * One connection pool per process and the Drizzle client over it. The pool connects on first use, so importing
 * this module never fails; the server's init hook checks DATABASE_URL up front (config.databaseUrl).
 */
import pg from 'pg';
import { drizzle } from 'drizzle-orm/node-postgres';
import * as schema from './schema';

export const pool = new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 10 });
export const db = drizzle(pool, { schema });
export type Db = typeof db;
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];
export { schema };

export async function closeDb(): Promise<void> {
	await pool.end();
}

/** True when the database answers a trivial query within two seconds. */
export async function databaseAnswers(): Promise<boolean> {
	const timeout = new Promise<false>((resolve) => setTimeout(() => resolve(false), 2000).unref());
	const probe = pool.query('select 1').then(
		() => true,
		() => false
	);
	return Promise.race([probe, timeout]);
}
