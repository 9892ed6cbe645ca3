/**
 * Background jobs with pg-boss, in the web server's process: mail delivery is queued so that a slow mail server
 * never holds up a request. Queues are created before anything is sent (a send to a missing queue is dropped).
 */
import PgBoss from 'pg-boss';
import { config } from '../config';
import { sendMail, type OutgoingMail } from '../mail/send';

export const QUEUES = { mail: 'mail' } as const;

let boss: PgBoss | undefined;
let starting: Promise<PgBoss> | undefined;

export function startJobs(): Promise<PgBoss> {
	starting ??= (async () => {
		const instance = new PgBoss({ connectionString: config.databaseUrl, schema: 'pgboss', max: 4 });
		instance.on('error', (err) => console.error('[escapement] job queue:', err.message));
		await instance.start();
		await instance.createQueue(QUEUES.mail);
		await instance.work<OutgoingMail>(QUEUES.mail, async (jobs) => {
			for (const job of jobs) await sendMail(job.data);
		});
		boss = instance;
		return instance;
	})();
	return starting;
}

/** Queue a message; it is sent by the worker, retried on failure. */
export async function queueMail(mail: OutgoingMail): Promise<void> {
	const instance = boss ?? (await startJobs());
	const id = await instance.send(QUEUES.mail, mail, { retryLimit: 5, retryDelay: 10, retryBackoff: true });
	if (!id) throw new Error(`jobs: the mail queue did not accept the message to ${String(mail.to)}; is the "${QUEUES.mail}" queue created?`);
}

export async function stopJobs(): Promise<void> {
	await boss?.stop({ graceful: true, wait: true });
	boss = undefined;
	starting = undefined;
}
