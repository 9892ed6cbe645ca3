/**
 * Engine jobs end to end with real worker processes (`scripts/worker.ts`, spawned here) on the real PostgreSQL: the
 * work budget hands a large audit to a job (202) while a small one is stored at once (201); two workers share the
 * jobs; the job's progress moves and it can be cancelled; a worker killed (SIGKILL) mid-job has its job retried by
 * the other after pg-boss expires it, and the audit is stored exactly once; the same inputs again reuse the result.
 * The schemes are complete graphs K_n (one step per pair of states, [trade] the densest scheme on n states); the jobs
 * that are watched or killed mid-way are K30 (435 steps, 20,000 listed cycles), whose stages last long enough to be
 * seen on an idle machine (a K8 job ended within one poll there).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { db, makeLab, schema } from './db';
import { api, body, tokenFor } from './request';
import { triangleScheme } from './api-fixtures';
import { requireLab, type SignedInUser } from '../../src/lib/server/access';
import { createScheme } from '../../src/lib/server/schemes';
import { completeScheme } from '../../src/lib/engine/random-scheme';
import { auditWork, closeEnginePool } from '../../src/lib/server/engine-pool';
import { stopJobs } from '../../src/lib/server/jobs';

type Json = Record<string, any>;
let home: Awaited<ReturnType<typeof makeLab>>;
let modeller: string;
let reader: string;
const workers: { name: string; child: ChildProcess; log: string[] }[] = [];
const WORKER_ENV = { ENGINE_JOB_EXPIRE_SECONDS: '8', JOB_MAINTENANCE_SECONDS: '1', ENGINE_THREADS: '1' };

/** Starts `npm run worker`'s script as a child process and waits for its "ready" line. */
async function startWorker(): Promise<{ name: string; child: ChildProcess; log: string[] }> {
	const child = spawn(process.execPath, ['--import', 'tsx', 'scripts/worker.ts'], {
		env: { ...process.env, ...WORKER_ENV },
		stdio: ['ignore', 'pipe', 'pipe']
	});
	const log: string[] = [];
	const name = await new Promise<string>((resolve, reject) => {
		const timer = setTimeout(() => reject(new Error(`worker did not start:\n${log.join('')}`)), 60_000);
		child.stdout!.on('data', (chunk: Buffer) => {
			log.push(chunk.toString());
			const ready = /worker (\S+) ready/.exec(log.join(''));
			if (ready) {
				clearTimeout(timer);
				resolve(ready[1]);
			}
		});
		child.stderr!.on('data', (chunk: Buffer) => log.push(chunk.toString()));
		child.on('exit', (code) => reject(new Error(`worker exited (${code}) before it was ready:\n${log.join('')}`)));
	});
	const worker = { name, child, log };
	workers.push(worker);
	return worker;
}

/** K_n whose first step is `tilt` times faster forward: its own cache key, and one step out of balance. */
async function denseScheme(n: number, tilt: number, name: string) {
	const access = await requireLab(home.people.modeller as SignedInUser, home.lab.slug, 'model');
	const scheme = completeScheme(n);
	scheme.steps[0].kForward = tilt;
	return (await createScheme(access, { name, scheme })).scheme.id;
}

async function requestAudit(schemeId: string): Promise<{ status: number; payload: Json }> {
	const res = await api('POST', `/api/v1/labs/${home.lab.slug}/schemes/${schemeId}/audits`, { token: modeller, json: {} });
	return { status: res.status, payload: await body<Json>(res) };
}

async function jobOf(id: string): Promise<Json> {
	const res = await api('GET', `/api/v1/labs/${home.lab.slug}/jobs/${id}`, { token: reader });
	return (await body<Json>(res)).job;
}

/** Polls a job until `until` holds (every 100 ms), recording every state seen. */
async function watch(id: string, until: (job: Json) => boolean, seconds = 90): Promise<Json[]> {
	const seen: Json[] = [];
	const deadline = Date.now() + seconds * 1000;
	while (Date.now() < deadline) {
		const job = await jobOf(id);
		seen.push(job);
		if (until(job)) return seen;
		await new Promise((r) => setTimeout(r, 100));
	}
	throw new Error(`job ${id} did not get there in ${seconds} s; last: ${JSON.stringify(seen.at(-1))}`);
}

const finished = (job: Json) => !['queued', 'running'].includes(job.status);
const auditsOf = (schemeId: string) => db.select({ id: schema.audits.id, sha256: schema.audits.sha256 }).from(schema.audits).where(eq(schema.audits.schemeId, schemeId));

beforeAll(async () => {
	home = await makeLab(['lead', 'modeller', 'reader']);
	modeller = await tokenFor(home.people.modeller.id);
	reader = await tokenFor(home.people.reader.id);
	// K7 and larger go to jobs, a triangle does not ([der] auditWork(K6) = 6³ + 2^10·6·200; a triangle 3³ + 2·3·200)
	process.env.ENGINE_WORK_BUDGET = String(auditWork(completeScheme(6)));
	// a job whose worker died goes to another worker after this long (pg-boss expiry; 15 minutes by default)
	process.env.ENGINE_JOB_EXPIRE_SECONDS = WORKER_ENV.ENGINE_JOB_EXPIRE_SECONDS;
}, 60_000);

afterAll(async () => {
	delete process.env.ENGINE_WORK_BUDGET;
	delete process.env.ENGINE_JOB_EXPIRE_SECONDS;
	for (const w of workers) w.child.kill('SIGKILL');
	await stopJobs();
	await closeEnginePool();
});

describe('engine jobs', () => {
	it('stores a small audit at once and hands one past the work budget to a job that a worker completes', async () => {
		const access = await requireLab(home.people.modeller as SignedInUser, home.lab.slug, 'model');
		const triangle = (await createScheme(access, { name: 'Triangle', scheme: triangleScheme('Triangle') })).scheme.id;
		const small = await requestAudit(triangle);
		expect(small.status).toBe(201);
		expect(small.payload.audit.verdict).toBe('violation');

		const dense = await denseScheme(8, 10, 'K8 tilted');
		const big = await requestAudit(dense);
		expect(big.status).toBe(202);
		expect(big.payload.job.status).toBe('queued');
		expect(await auditsOf(dense)).toHaveLength(0);

		await startWorker();
		const [done] = (await watch(big.payload.job.id, finished)).slice(-1);
		expect(done.status).toBe('done');
		const stored = await auditsOf(dense);
		expect(stored.map((a) => a.id)).toEqual([done.auditId]);
		const audit = await body<Json>(await api('GET', `/api/v1/labs/${home.lab.slug}/audits/${done.auditId}/verify`, { token: reader }));
		// [der] the worker's hash is the hash of what PostgreSQL holds
		expect(audit.matches).toBe(true);

		// [der] the same inputs, options and engine version again: the stored result is reused, no new job
		const again = await requestAudit(dense);
		expect(again.status).toBe(201);
		expect(again.payload.audit.sha256).toBe(stored[0].sha256);
		expect(again.payload.audit.id).not.toBe(done.auditId);
	}, 180_000);

	it('shares the jobs between two workers', async () => {
		if (workers.length < 2) await startWorker();
		const schemes = await Promise.all([2, 3, 4, 5].map((tilt) => denseScheme(7, tilt, `K7 ×${tilt}`)));
		const jobs: string[] = [];
		for (const s of schemes) jobs.push((await requestAudit(s)).payload.job.id as string);
		const ends = await Promise.all(jobs.map(async (id) => (await watch(id, finished, 150)).at(-1)!));
		expect(ends.map((j) => j.status)).toEqual(['done', 'done', 'done', 'done']);
		const rows = await db.select({ id: schema.engineJobs.id, workedBy: schema.engineJobs.workedBy }).from(schema.engineJobs).where(eq(schema.engineJobs.labId, home.lab.id));
		const takers = new Set(rows.filter((r) => jobs.includes(r.id)).map((r) => r.workedBy));
		expect([...takers].sort()).toEqual(workers.map((w) => w.name).sort());
	}, 240_000);

	it('reports its progress as it goes, and a cancelled job stops and stores nothing', async () => {
		const dense = await denseScheme(30, 7, 'K30 to watch');
		const id = (await requestAudit(dense)).payload.job.id as string;
		const seen = await watch(id, finished, 150);
		const fractions = seen.map((j) => j.progress);
		// [der] progress never goes back, ends at 1, and names its stages on the way
		expect([...fractions].sort((a, b) => a - b)).toEqual(fractions);
		expect(seen.at(-1)!.progress).toBe(1);
		expect(new Set(seen.filter((j) => j.status === 'running').map((j) => j.stage)).size).toBeGreaterThan(1);

		const doomed = await denseScheme(30, 9, 'K30 to cancel');
		const doomedJob = (await requestAudit(doomed)).payload.job.id as string;
		await watch(doomedJob, (j) => j.status === 'running' && j.stage !== 'starting');
		const cancel = await api('POST', `/api/v1/labs/${home.lab.slug}/jobs/${doomedJob}/cancel`, { token: modeller });
		expect(cancel.status).toBe(200);
		expect((await watch(doomedJob, finished)).at(-1)!.status).toBe('cancelled');
		await new Promise((r) => setTimeout(r, 2000)); // longer than a heartbeat: a late write would show now
		expect(await auditsOf(doomed)).toHaveLength(0);
		// [trade] a reader may watch but not cancel; a finished job cannot be cancelled
		expect((await api('POST', `/api/v1/labs/${home.lab.slug}/jobs/${id}/cancel`, { token: reader })).status).toBe(403);
		expect((await api('POST', `/api/v1/labs/${home.lab.slug}/jobs/${id}/cancel`, { token: modeller })).status).toBe(409);
	}, 240_000);

	it('retries the job of a worker killed mid-job on the other worker, and stores the audit exactly once', async () => {
		while (workers.length < 2) await startWorker();
		const dense = await denseScheme(30, 11, 'K30 whose worker dies');
		const id = (await requestAudit(dense)).payload.job.id as string;
		const [running] = (await watch(id, (j) => j.status === 'running' && j.stage !== 'starting')).slice(-1);
		const [row] = await db.select({ workedBy: schema.engineJobs.workedBy }).from(schema.engineJobs).where(eq(schema.engineJobs.id, id));
		const victim = workers.find((w) => w.name === row.workedBy)!;
		expect(victim).toBeDefined();
		victim.child.kill('SIGKILL');
		expect(running.status).toBe('running');
		const [done] = (await watch(id, finished, 150)).slice(-1);
		expect(done.status).toBe('done');
		expect(done.attempts).toBeGreaterThanOrEqual(2);
		const [after] = await db.select({ workedBy: schema.engineJobs.workedBy }).from(schema.engineJobs).where(eq(schema.engineJobs.id, id));
		expect(after.workedBy).not.toBe(victim.name);
		// exactly once: one audit of the scheme, the one the job names
		expect((await auditsOf(dense)).map((a) => a.id)).toEqual([done.auditId]);
	}, 240_000);
});
