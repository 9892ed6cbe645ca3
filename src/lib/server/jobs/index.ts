/**
 * Background jobs with pg-boss. Two kinds of work:
 * - mail delivery, queued so that a slow mail server never holds up a request; the web server works it
 *   (startJobs, from its init hook), so that a short-lived process (a script, a test file) never takes a job and
 *   exits before sending it;
 * - engine jobs past the work budget (audit-job.ts, sweep-job.ts, framed by engine-jobs.ts), worked by worker
 *   processes (`npm run worker`, startEngineWorkers) on any machine with the same DATABASE_URL.
 * The queues are created by the migrations (scripts/migrate.ts, as the schema's owner) and again here (harmless);
 * a send to a missing queue is dropped.
 */
import PgBoss from 'pg-boss';
import type pg from 'pg';
import { config } from '../config';
import type { Tx } from '../db';
import { sendMail, type OutgoingMail } from '../mail/send';

export const QUEUES = { mail: 'mail', audit: 'engine-audit', sweep: 'engine-sweep' } as const;

let booting: Promise<PgBoss> | undefined;
let working: Promise<void> | undefined;

/** The started pg-boss instance of this process, with its queues created. */
export function getBoss(): Promise<PgBoss> {
	booting ??= (async () => {
		const boss = new PgBoss({
			connectionString: config.databaseUrl,
			schema: 'pgboss',
			max: 4,
			// how often an expired job (its worker died) is handed to another worker
			maintenanceIntervalSeconds: Number(process.env.JOB_MAINTENANCE_SECONDS) || 30
		});
		// pg-boss reports lost connections here and keeps polling; without a listener they would end the process
		boss.on('error', (err) => console.error('[escapement] job queue:', err.message));
		try {
			await boss.start();
			for (const name of Object.values(QUEUES)) await boss.createQueue(name);
		} catch (err) {
			booting = undefined; // a later call tries again (the database may be back)
			throw err;
		}
		return boss;
	})();
	return booting;
}

/** Works the mail queue in this process (the web server). Safe to call more than once. */
export function startJobs(): Promise<void> {
	working ??= (async () => {
		const boss = await getBoss();
		// Up to 20 messages per fetch, each on its own: a message that fails is retried alone (pg-boss completes only
		// the jobs still active when the handler returns), so the others are not sent twice.
		await boss.work<OutgoingMail>(QUEUES.mail, { pollingIntervalSeconds: 1, batchSize: 20 }, async (jobs) => {
			await Promise.all(
				jobs.map((job) =>
					sendMail(job.data).catch((err: Error) => boss.fail(QUEUES.mail, job.id, { message: err.message }))
				)
			);
		});
	})();
	return working;
}

/**
 * pg-boss's `db` option for a Drizzle transaction: the job is inserted on the transaction's own connection, so it
 * commits or rolls back with the change it announces (no mail lost after a crash, none sent for a rolled-back change).
 */
function throughTransaction(tx: Tx): { executeSql(text: string, values: unknown[]): Promise<{ rows: unknown[] }> } {
	const client = (tx as unknown as { session?: { client?: pg.PoolClient } }).session?.client;
	if (!client || typeof client.query !== 'function') throw new Error('jobs: cannot reach the connection of this transaction to queue mail in it');
	return { executeSql: (text, values) => client.query(text, values) };
}

/**
 * Queue a message; the web server's worker sends it, retrying on failure. With `tx`, the message is queued inside
 * that transaction and exists exactly when the transaction commits.
 */
export async function queueMail(mail: OutgoingMail, tx?: Tx): Promise<void> {
	const boss = await getBoss();
	const options = { retryLimit: 5, retryDelay: 5, retryBackoff: true, ...(tx ? { db: throughTransaction(tx) } : {}) };
	const id = await boss.send(QUEUES.mail, mail, options);
	if (!id) throw new Error(`jobs: the mail queue did not accept the message to ${String(mail.to)}; is the "${QUEUES.mail}" queue created?`);
}

export async function stopJobs(): Promise<void> {
	const boss = booting && (await booting.catch(() => undefined));
	booting = undefined;
	working = undefined;
	await boss?.stop({ graceful: true, wait: true });
}
