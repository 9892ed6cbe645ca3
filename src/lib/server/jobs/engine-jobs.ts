/**
 * What every engine job shares: its row in engine_jobs (status, progress, stage), queueing through pg-boss, the
 * cache of results by key, cancelling, and `workJob`, the frame a handler runs in: it takes the row, reports
 * progress and watches for a cancel once a second (aborting the engine thread), and finishes the row exactly once.
 * A job's pg-boss payload is only { jobId }; everything else is read from the row, so a retry starts from the truth.
 */
import { hostname } from 'node:os';
import { error } from '@sveltejs/kit';
import { and, eq, inArray, sql } from 'drizzle-orm';
import { db, schema, type Tx } from '../db';
import { isUuid } from '../schemes';
import { getBoss, QUEUES } from './index';

export type EngineJobKind = 'audit' | 'sweep';
export type EngineJob = typeof schema.engineJobs.$inferSelect;

/** Attempts after the first when a worker dies or the database drops; engine refusals are never retried. */
export const JOB_RETRY_LIMIT = 3;

/** How long a job may stay active before pg-boss gives it to another worker (its worker is presumed dead). */
export function jobExpireSeconds(): number {
	return Number(process.env.ENGINE_JOB_EXPIRE_SECONDS) || 15 * 60;
}

export const workerName = `${hostname()}:${process.pid}`;

/** Queues a new job row and its pg-boss delivery. The row is written first, so the delivery always finds it. */
export async function queueEngineJob(values: {
	kind: EngineJobKind;
	labId: string;
	schemeId: string | null;
	input: Record<string, unknown>;
	cacheKey: string;
	createdBy: string;
}): Promise<EngineJob> {
	const [job] = await db.insert(schema.engineJobs).values(values).returning();
	const boss = await getBoss();
	const id = await boss.send(QUEUES[values.kind], { jobId: job.id }, {
		retryLimit: JOB_RETRY_LIMIT,
		retryDelay: 2,
		expireInSeconds: jobExpireSeconds()
	});
	if (!id) {
		await finish(job.id, { status: 'failed', error: `the "${QUEUES[values.kind]}" queue did not accept the job; run the migrations (they create the queues)` });
		throw new Error(`jobs: the ${values.kind} queue refused job ${job.id}`);
	}
	return job;
}

/** A job of this lab still waiting or running with the same cache key (the same work asked for twice). */
export async function activeJobWithKey(labId: string, cacheKey: string): Promise<EngineJob | null> {
	const [job] = await db
		.select()
		.from(schema.engineJobs)
		.where(and(eq(schema.engineJobs.labId, labId), eq(schema.engineJobs.cacheKey, cacheKey), inArray(schema.engineJobs.status, ['queued', 'running'])))
		.limit(1);
	return job ?? null;
}

export async function cachedResult<T>(cacheKey: string): Promise<T | null> {
	const [row] = await db.select({ result: schema.engineResults.result }).from(schema.engineResults).where(eq(schema.engineResults.cacheKey, cacheKey));
	return (row?.result as T) ?? null;
}

export async function storeResult(tx: Tx, cacheKey: string, kind: EngineJobKind, engineVersion: string, result: unknown): Promise<void> {
	await tx.insert(schema.engineResults).values({ cacheKey, kind, engineVersion, result }).onConflictDoNothing();
}

/** One job of this lab, or 404. */
export async function getEngineJob(labId: string, jobId: string): Promise<EngineJob> {
	if (!isUuid(jobId)) error(404, { message: 'No such job in this lab.', code: 'not_found' });
	const [job] = await db
		.select()
		.from(schema.engineJobs)
		.where(and(eq(schema.engineJobs.id, jobId), eq(schema.engineJobs.labId, labId)));
	if (!job) error(404, { message: 'No such job in this lab.', code: 'not_found' });
	return job;
}

/** Jobs of a scheme still waiting or running, newest first (the scheme page shows them). */
export async function activeJobsOfScheme(labId: string, schemeId: string): Promise<EngineJob[]> {
	return db
		.select()
		.from(schema.engineJobs)
		.where(and(eq(schema.engineJobs.labId, labId), eq(schema.engineJobs.schemeId, schemeId), inArray(schema.engineJobs.status, ['queued', 'running'])))
		.orderBy(sql`${schema.engineJobs.createdAt} desc`);
}

/** Cancels a job that has not finished; a running one stops within about a second. Returns the row as it is now. */
export async function cancelEngineJob(labId: string, jobId: string, userId: string): Promise<EngineJob> {
	const job = await getEngineJob(labId, jobId);
	if (job.status === 'done' || job.status === 'failed')
		error(409, { message: `This job has already ${job.status === 'done' ? 'finished' : 'failed'}; there is nothing to cancel.`, code: 'conflict' });
	await finish(jobId, { status: 'cancelled', stage: `cancelled by ${userId === job.createdBy ? 'its author' : 'a lab member'}` }, ['queued', 'running']);
	return getEngineJob(labId, jobId);
}

async function finish(
	jobId: string,
	values: Partial<Pick<EngineJob, 'status' | 'stage' | 'error' | 'auditId' | 'progress'>>,
	from: EngineJob['status'][] = ['queued', 'running'],
	tx: Tx | typeof db = db
) {
	return tx
		.update(schema.engineJobs)
		.set({ ...values, updatedAt: new Date(), finishedAt: new Date() })
		.where(and(eq(schema.engineJobs.id, jobId), inArray(schema.engineJobs.status, from)))
		.returning({ id: schema.engineJobs.id });
}

/** Thrown inside a handler when its job was cancelled: nothing is stored. */
export class JobCancelled extends Error {
	constructor() {
		super('jobs: the job was cancelled');
		this.name = 'JobCancelled';
	}
}

export interface JobContext {
	job: EngineJob;
	/** aborts when the job is cancelled: pass it to runEngine so the engine thread stops */
	signal: AbortSignal;
	progress(fraction: number, stage: string): void;
	/**
	 * Writes the outcome in one transaction with `done`, only if the row is still running (not cancelled, not
	 * finished by another worker that took the job after it expired). Returns false when it was not written.
	 */
	complete(write: (tx: Tx) => Promise<Partial<Pick<EngineJob, 'auditId'>>>): Promise<boolean>;
}

/**
 * Runs a handler for one delivery of a job. Finished rows are skipped (a retry after the outcome was written);
 * EngineError and other refusals the handler marks as failed end the job; any other error is thrown back to pg-boss,
 * which retries the delivery up to JOB_RETRY_LIMIT times.
 */
export async function workJob(jobId: string, handler: (ctx: JobContext) => Promise<void>): Promise<void> {
	const [job] = await db
		.update(schema.engineJobs)
		.set({ status: 'running', attempts: sql`${schema.engineJobs.attempts} + 1`, workedBy: workerName, stage: 'starting', updatedAt: new Date() })
		.where(and(eq(schema.engineJobs.id, jobId), inArray(schema.engineJobs.status, ['queued', 'running'])))
		.returning();
	if (!job) return; // finished, cancelled or unknown: nothing to do, and nothing to retry
	const abort = new AbortController();
	let latest = { fraction: job.progress, stage: 'starting' };
	let reported = '';
	const beat = async () => {
		const key = `${latest.fraction}|${latest.stage}`;
		const [row] = await db
			.update(schema.engineJobs)
			.set(key === reported ? { updatedAt: new Date() } : { progress: latest.fraction, stage: latest.stage, updatedAt: new Date() })
			.where(and(eq(schema.engineJobs.id, jobId), eq(schema.engineJobs.status, 'running')))
			.returning({ id: schema.engineJobs.id });
		reported = key;
		if (!row) abort.abort(new JobCancelled());
	};
	const heartbeat = setInterval(() => void beat().catch(() => {}), 1_000);
	try {
		await handler({
			job,
			signal: abort.signal,
			progress(fraction, stage) {
				latest = { fraction: Math.max(latest.fraction, Math.min(0.99, fraction)), stage };
			},
			async complete(write) {
				return db.transaction(async (tx) => {
					const [row] = await tx
						.select({ status: schema.engineJobs.status })
						.from(schema.engineJobs)
						.where(eq(schema.engineJobs.id, jobId))
						.for('update');
					if (row?.status !== 'running') return false;
					const outcome = await write(tx);
					await finish(jobId, { ...outcome, status: 'done', progress: 1, stage: 'done' }, ['running'], tx);
					return true;
				});
			}
		});
	} catch (err) {
		if (abort.signal.aborted || err instanceof JobCancelled) return;
		if (isRefusal(err)) {
			await finish(jobId, { status: 'failed', stage: 'failed', error: (err as Error).message }, ['running']);
			return;
		}
		const last = job.attempts >= JOB_RETRY_LIMIT + 1;
		await db
			.update(schema.engineJobs)
			.set(last ? { status: 'failed', stage: 'failed', error: (err as Error).message, finishedAt: new Date() } : { status: 'queued', stage: `retrying after: ${(err as Error).message}` })
			.where(and(eq(schema.engineJobs.id, jobId), eq(schema.engineJobs.status, 'running')))
			.catch(() => {});
		throw err;
	} finally {
		clearInterval(heartbeat);
	}
}

/** Errors that say the input cannot be worked (retrying would give the same answer). */
function isRefusal(err: unknown): boolean {
	return err instanceof Error && (err.name === 'EngineError' || err.name === 'JobRefused');
}

/** A handler's refusal of its input (a revision that no longer exists…): the job fails with this message. */
export class JobRefused extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'JobRefused';
	}
}

/** The job as the API and the progress bar show it. */
export function jobView(job: EngineJob, labSlug: string) {
	return {
		id: job.id,
		kind: job.kind,
		status: job.status,
		progress: job.progress,
		stage: job.stage,
		error: job.error,
		attempts: job.attempts,
		createdAt: job.createdAt,
		updatedAt: job.updatedAt,
		finishedAt: job.finishedAt,
		auditId: job.auditId,
		url: `/api/v1/labs/${labSlug}/jobs/${job.id}`,
		page: `/labs/${labSlug}/jobs/${job.id}`,
		auditUrl: job.auditId ? `/labs/${labSlug}/audits/${job.auditId}` : null
	};
}
