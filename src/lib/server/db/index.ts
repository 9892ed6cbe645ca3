/**
 * One connection pool per process and the Drizzle client over it. The pool connects on first use, so importing
 * this module never fails; the server's init hook checks DATABASE_URL up front (config.databaseUrl).
 *
 * PostgreSQL going away (a restart, a network cut) must not take the process with it: the pool's 'error' event
 * (an idle connection dropped by the server) is handled, connection failures are recognised (isDatabaseDown) so that
 * requests answer 503 instead of 500, and a small watch remembers that the database is down, probing it once a
 * second until it answers again, so that requests in the gap fail at once instead of each waiting for a timeout.
 */
import pg from 'pg';
import { drizzle } from 'drizzle-orm/node-postgres';
import * as schema from './schema';

export const pool = new pg.Pool({
	connectionString: process.env.DATABASE_URL,
	max: Number(process.env.DATABASE_POOL_MAX) || 10,
	// a request waits at most this long for a connection when the server is gone, not the default of forever
	connectionTimeoutMillis: 5_000
});
pool.on('error', (err) => {
	// An idle client lost its connection; the pool drops it and opens a new one on the next query.
	markDatabaseDown(err);
});
pool.on('connect', (client) => {
	// The pool listens to idle clients only: a client checked out between two queries of a transaction that loses its
	// connection emits 'error' with no listener, which would end the process. Its pending query fails on its own.
	client.on('error', (err) => markDatabaseDown(err));
});
export const db = drizzle(pool, { schema });
export type Db = typeof db;
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];
export { schema };

export const DATABASE_DOWN_MESSAGE = 'The database is not answering right now (a restart or an outage). Nothing was changed; try again in a few seconds.';

export async function closeDb(): Promise<void> {
	stopWatch();
	await pool.end();
}

/** SQLSTATE classes and codes that mean the server is unreachable or going away, not that the query was wrong. */
const DOWN_SQLSTATES = new Set(['57P01', '57P02', '57P03', '53300']);
const DOWN_ERRNOS = new Set(['ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', 'ENOTFOUND', 'EHOSTUNREACH', 'EAI_AGAIN']);
const DOWN_MESSAGES = /Connection terminated|timeout exceeded when trying to connect|Client has encountered a connection error|connection is closed|the database system is (starting up|shutting down|in recovery)|Cannot use a pool after calling end/i;

/** True when `err` (or what it wraps: Drizzle wraps driver errors in `cause`) says the database cannot be reached. */
export function isDatabaseDown(err: unknown): boolean {
	for (let e = err, depth = 0; e && typeof e === 'object' && depth < 5; e = (e as { cause?: unknown }).cause, depth++) {
		const { code, message } = e as { code?: unknown; message?: unknown };
		if (typeof code === 'string' && (DOWN_SQLSTATES.has(code) || code.startsWith('08') || DOWN_ERRNOS.has(code))) return true;
		if (typeof message === 'string' && DOWN_MESSAGES.test(message)) return true;
	}
	return false;
}

let downSince: number | null = null;
let watch: ReturnType<typeof setInterval> | undefined;

function stopWatch() {
	if (watch) clearInterval(watch);
	watch = undefined;
}

/** Remembers that the database is down (when `err` says so) and starts probing it until it answers. */
export function markDatabaseDown(err: unknown): void {
	if (!isDatabaseDown(err)) return;
	if (downSince === null) {
		downSince = Date.now();
		console.error(`[escapement] database: not answering (${(err as Error).message}); answering 503 until it is back`);
	}
	watch ??= setInterval(() => void databaseAnswers(), 1_000);
	watch.unref();
}

/** Since when (ms epoch) this process has seen the database down, or null while it answers. */
export function databaseDownSince(): number | null {
	return downSince;
}

/** True when the database answers a trivial query within two seconds. */
export async function databaseAnswers(): Promise<boolean> {
	const timeout = new Promise<false>((resolve) => setTimeout(() => resolve(false), 2000).unref());
	const probe = pool.query('select 1').then(
		() => {
			if (downSince !== null) {
				console.error(`[escapement] database: answering again after ${((Date.now() - downSince) / 1000).toFixed(1)} s`);
				downSince = null;
				stopWatch();
			}
			return true;
		},
		(err) => {
			markDatabaseDown(err);
			return false;
		}
	);
	return Promise.race([probe, timeout]);
}
