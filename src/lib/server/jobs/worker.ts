/**
 * A worker process's loop: takes engine jobs from pg-boss (audits and sweeps past the work budget) and runs each
 * through its handler, `concurrency` at a time per queue. Started by scripts/worker.ts (`npm run worker`).
 */
import { getBoss, QUEUES } from './index';
import { handleAuditJob } from './audit-job';
import { handleSweepJob } from './sweep-job';

const HANDLERS = { [QUEUES.audit]: handleAuditJob, [QUEUES.sweep]: handleSweepJob } as const;

export async function startEngineWorkers(options: { concurrency?: number; pollingIntervalSeconds?: number } = {}): Promise<void> {
	const boss = await getBoss();
	const concurrency = options.concurrency ?? 1;
	for (const [queue, handle] of Object.entries(HANDLERS))
		for (let i = 0; i < concurrency; i++)
			await boss.work<{ jobId: string }>(queue, { pollingIntervalSeconds: options.pollingIntervalSeconds ?? 1, batchSize: 1 }, async ([job]) => {
				await handle(job.data.jobId);
			});
}
