/**
 * Velocity sweeps past the work budget (many points on a large scheme), run by a worker process. `requestSweep`
 * answers from the cache, joins a running job with the same key, computes inline within the budget, or queues a job;
 * `handleSweepJob` sweeps in the engine pool point by point (its progress is the share of points done) and stores
 * the curve under its cache key: SHA-256 of the audited scheme, the sweep's variable, range and points, engine version.
 */
import { eq } from 'drizzle-orm';
import { db, schema } from '../db';
import type { LabAccess } from '../access';
import { overBudget, runEngine, sweepWork } from '../engine-pool';
import { ENGINE_VERSION, type Scheme } from '../../engine';
import type { SweepPoint } from '../audit-curves';
import { activeJobWithKey, cachedResult, JobRefused, queueEngineJob, storeResult, workJob, type EngineJob } from './engine-jobs';

export interface SweepRequest {
	variable: string;
	from: number;
	to: number;
	points: number;
}
export interface SweepResult {
	points: SweepPoint[];
	stallForcePN: number | null;
}

interface SweepJobInput extends SweepRequest {
	auditId: string;
}

export type SweepOutcome = { result: SweepResult; job?: undefined } | { job: EngineJob; result?: undefined };

export async function requestSweep(
	access: Pick<LabAccess, 'lab' | 'user'>,
	audit: { id: string; schemeId: string; inputs: Scheme },
	sweep: SweepRequest
): Promise<SweepOutcome> {
	if (!overBudget(sweepWork(audit.inputs, sweep.points))) return { result: await runEngine('sweep', { scheme: audit.inputs, ...sweep }) };
	const { key } = await runEngine('cacheKey', { kind: 'sweep', scheme: audit.inputs, options: { ...sweep } });
	const cached = await cachedResult<SweepResult>(key);
	if (cached) return { result: cached };
	const running = await activeJobWithKey(access.lab.id, key);
	if (running) return { job: running };
	const input: SweepJobInput = { auditId: audit.id, ...sweep };
	return { job: await queueEngineJob({ kind: 'sweep', labId: access.lab.id, schemeId: audit.schemeId, input: { ...input }, cacheKey: key, createdBy: access.user.id }) };
}

/** The curve of a finished sweep job (from the cache, where the job stored it). */
export async function sweepJobResult(job: EngineJob): Promise<SweepResult | null> {
	return job.kind === 'sweep' && job.status === 'done' ? cachedResult<SweepResult>(job.cacheKey) : null;
}

export async function handleSweepJob(jobId: string): Promise<void> {
	await workJob(jobId, async ({ job, signal, progress, complete }) => {
		const input = job.input as SweepJobInput;
		if (await cachedResult<SweepResult>(job.cacheKey)) {
			await complete(async () => ({}));
			return;
		}
		progress(0.01, 'reading the audit');
		const [audit] = await db.select({ inputs: schema.audits.inputs, labId: schema.audits.labId }).from(schema.audits).where(eq(schema.audits.id, input.auditId));
		if (!audit || audit.labId !== job.labId) throw new JobRefused('The audit to sweep no longer exists.');
		const { variable, from, to, points } = input;
		const result = await runEngine('sweep', { scheme: audit.inputs as Scheme, variable, from, to, points }, { signal, onProgress: (p) => progress(p.fraction, p.stage) });
		progress(0.97, 'storing the curve');
		await complete(async (tx) => {
			await storeResult(tx, job.cacheKey, 'sweep', ENGINE_VERSION, result);
			return {};
		});
	});
}
