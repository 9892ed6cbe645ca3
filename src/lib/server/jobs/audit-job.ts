/**
 * Audits past the work budget, run by a worker process: `requestAudit` (what the routes call) audits inline when
 * the scheme is small enough, reuses a stored result with the same cache key, joins a job already running for it,
 * or queues a job; `handleAuditJob` (the worker) computes it in the engine pool and stores the audit exactly once.
 * Cache key: SHA-256 of the canonical audited scheme (revision with the conditions applied) and engine version.
 */
import { and, eq, getTableColumns, sql } from 'drizzle-orm';
import { db, schema, type Tx } from '../db';
import type { LabAccess } from '../access';
import { logActivity } from '../activity';
import { auditedRevision, computeAudit, storeAudit, type AuditRow, type Conditions } from '../audits';
import { auditWork, overBudget, runEngine } from '../engine-pool';
import type { Scheme } from '../../engine';
import { activeJobWithKey, cachedResult, JobRefused, queueEngineJob, storeResult, workJob, type EngineJob } from './engine-jobs';

interface AuditJobInput {
	revisionId: string;
	revisionNumber: number;
	conditions: Conditions;
}

/** What the cache keeps for an audit: the first audit stored with this key (its results are copied, not recomputed). */
interface CachedAudit {
	auditId: string;
	sha256: string;
}

export type AuditRequestOutcome = { audit: AuditRow; job?: undefined } | { job: EngineJob; audit?: undefined };

/** An audit now (within the budget or from the cache) or a job that will store it. */
export async function requestAudit(access: LabAccess, schemeId: string, opts: { revision?: number; conditions?: Conditions } = {}): Promise<AuditRequestOutcome> {
	const { scheme, revision } = await auditedRevision(access, schemeId, opts.revision);
	const target = { schemeId, schemeName: scheme.name, revisionId: revision.id, revisionNumber: revision.number };
	const document = revision.scheme as Scheme;
	if (!overBudget(auditWork(document))) return { audit: await storeAudit(access, target, await computeAudit(document, opts.conditions)) };
	const { key } = await runEngine('cacheKey', { kind: 'audit', scheme: document, conditions: opts.conditions });
	const cached = await cachedResult<CachedAudit>(key);
	if (cached) {
		const copy = await copyAudit(access, target, cached);
		if (copy) return { audit: copy };
	}
	const running = await activeJobWithKey(access.lab.id, key);
	if (running) return { job: running };
	const input: AuditJobInput = { revisionId: revision.id, revisionNumber: revision.number, conditions: opts.conditions ?? {} };
	return { job: await queueEngineJob({ kind: 'audit', labId: access.lab.id, schemeId, input: { ...input }, cacheKey: key, createdBy: access.user.id }) };
}

/**
 * A new audit row (its own author and time) with the inputs, results and hash of the cached one, copied inside
 * PostgreSQL: no engine work and nothing parsed here. Null when the cached audit is gone.
 */
async function copyAudit(
	access: Pick<LabAccess, 'lab' | 'user'>,
	target: { schemeId: string; schemeName: string; revisionId: string; revisionNumber: number },
	cached: CachedAudit,
	tx: Tx | typeof db = db
): Promise<AuditRow | null> {
	const a = schema.audits;
	const { inputs: _i, results: _r, ...columns } = getTableColumns(a);
	const inserted = await tx.execute<{ id: string }>(sql`
		insert into ${a} (lab_id, scheme_id, revision_id, inputs, results, engine_version, sha256, verdict, verdict_counts, created_by)
		select ${access.lab.id}, ${target.schemeId}, ${target.revisionId}, inputs, results, engine_version, sha256, verdict, verdict_counts, ${access.user.id}
		from ${a} where id = ${cached.auditId} and sha256 = ${cached.sha256}
		returning id`);
	const id = inserted.rows[0]?.id;
	if (!id) return null;
	await tx.execute(sql`insert into audit_summaries (audit_id, summary, cycle_count)
		select ${id}, summary, cycle_count from audit_summaries where audit_id = ${cached.auditId}`);
	const [row] = await tx.select(columns).from(a).where(eq(a.id, id));
	await logActivity(
		{
			labId: access.lab.id,
			actorId: access.user.id,
			kind: 'audit-run',
			summary: `Audited "${target.schemeName}" revision ${target.revisionNumber}: ${row.verdict} (the same inputs were audited before; results reused)`,
			details: { auditId: row.id, schemeId: target.schemeId, revision: target.revisionNumber, reusedFrom: cached.auditId }
		},
		tx
	);
	return row as AuditRow;
}

/** The worker's handler: computes the audit of the job's revision and stores it with the job's outcome, once. */
export async function handleAuditJob(jobId: string): Promise<void> {
	await workJob(jobId, async ({ job, signal, progress, complete }) => {
		const input = job.input as AuditJobInput;
		progress(0.01, 'reading the revision');
		const [revision] = await db
			.select({ scheme: schema.schemeRevisions.scheme, schemeName: schema.schemes.name })
			.from(schema.schemeRevisions)
			.innerJoin(schema.schemes, eq(schema.schemes.id, schema.schemeRevisions.schemeId))
			.where(and(eq(schema.schemeRevisions.id, input.revisionId), eq(schema.schemes.labId, job.labId)));
		if (!revision || !job.schemeId) throw new JobRefused('The revision to audit no longer exists.');
		const access = { lab: { id: job.labId }, user: { id: job.createdBy } } as Pick<LabAccess, 'lab' | 'user'>;
		const target = { schemeId: job.schemeId, schemeName: revision.schemeName, revisionId: input.revisionId, revisionNumber: input.revisionNumber };
		const cached = await cachedResult<CachedAudit>(job.cacheKey);
		if (cached) {
			progress(0.9, 'reusing the stored result of the same inputs');
			await complete(async (tx) => {
				const row = await copyAudit(access, target, cached, tx);
				if (!row) throw new JobRefused('The stored result of the same inputs could not be read; run the audit again.');
				return { auditId: row.id };
			});
			return;
		}
		const outcome = await computeAudit(revision.scheme as Scheme, input.conditions, (p) => progress(0.05 + 0.85 * p.fraction, p.stage), signal);
		progress(0.92, 'storing the audit');
		await complete(async (tx) => {
			const row = await storeAudit(access, target, outcome, tx);
			await storeResult(tx, job.cacheKey, 'audit', outcome.engineVersion, { auditId: row.id, sha256: outcome.sha256 } satisfies CachedAudit);
			return { auditId: row.id };
		});
	});
}
