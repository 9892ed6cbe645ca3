/**
 * `npm run worker`: a worker process for engine jobs (audits past the work budget, long sweeps). Run as many as you
 * like, here or on other machines: each needs DATABASE_URL (the same database as the web server), Node 20 and this
 * project's node_modules. WORKER_CONCURRENCY jobs per queue at a time (default 1), ENGINE_THREADS engine threads.
 * It keeps running through a database restart (the queue and the pool reconnect) and stops cleanly on SIGTERM.
 */
import { closeDb } from '../src/lib/server/db/index';
import { closeEnginePool } from '../src/lib/server/engine-pool';
import { stopJobs } from '../src/lib/server/jobs/index';
import { workerName } from '../src/lib/server/jobs/engine-jobs';
import { startEngineWorkers } from '../src/lib/server/jobs/worker';

if (!process.env.DATABASE_URL) {
	console.error('[escapement] worker: DATABASE_URL is not set; point it at the database of the web server (postgres://user@host:port/db).');
	process.exit(1);
}
process.on('unhandledRejection', (reason) => console.error('[escapement] worker: unhandled rejection:', reason));

const concurrency = Number(process.env.WORKER_CONCURRENCY) || 1;
for (let attempt = 1; ; attempt++) {
	try {
		await startEngineWorkers({ concurrency });
		break;
	} catch (err) {
		// the database may be starting or restarting: keep trying instead of exiting
		console.error(`[escapement] worker: cannot reach the job queue (${(err as Error).message}); retrying in 2 s (attempt ${attempt})`);
		await stopJobs().catch(() => {});
		await new Promise((r) => setTimeout(r, 2000));
	}
}
console.log(`[escapement] worker ${workerName} ready (${concurrency} job(s) per queue at a time)`);

let stopping = false;
async function stop(signal: string) {
	if (stopping) return;
	stopping = true;
	console.log(`[escapement] worker ${workerName}: ${signal}, finishing the jobs in hand`);
	await stopJobs().catch(() => {});
	await closeEnginePool().catch(() => {});
	await closeDb().catch(() => {});
	process.exit(0);
}
process.on('SIGTERM', () => void stop('SIGTERM'));
process.on('SIGINT', () => void stop('SIGINT'));
