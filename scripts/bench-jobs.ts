/**
 * Job throughput: the same batch of audit jobs (complete graphs K7 with one step tilted, each its own cache key, all
 * past a small work budget) worked by 1 and then 2 worker processes (scripts/worker.ts). Prints jobs per minute and
 * the median time a job waited and ran. Run through scripts/bench-jobs.sh (it provides the database).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { inArray } from 'drizzle-orm';
import { db, schema, closeDb } from '../src/lib/server/db/index';
import { requireLab, type SignedInUser } from '../src/lib/server/access';
import { createScheme } from '../src/lib/server/schemes';
import { completeScheme } from '../src/lib/engine/random-scheme';
import { auditWork, closeEnginePool } from '../src/lib/server/engine-pool';
import { requestAudit } from '../src/lib/server/jobs/audit-job';
import { stopJobs } from '../src/lib/server/jobs/index';

const JOBS = Number(process.env.BENCH_JOBS) || 8;
const STATES = 7;
process.env.ENGINE_WORK_BUDGET = String(auditWork(completeScheme(STATES - 1)));

const [lab] = await db.insert(schema.labs).values({ slug: `bench-${Date.now()}`, name: 'Kestrel Motility Lab (bench)' }).returning();
const [user] = await db.insert(schema.users).values({ email: `bench-${Date.now()}@kestrel.example`, name: 'Bench' }).returning();
await db.insert(schema.labMembers).values({ labId: lab.id, userId: user.id, role: 'modeller' });
const access = await requireLab(user as SignedInUser, lab.slug, 'model');

function startWorker(): Promise<ChildProcess> {
	const child = spawn(process.execPath, ['--import', 'tsx', 'scripts/worker.ts'], { env: { ...process.env, ENGINE_THREADS: '1' }, stdio: ['ignore', 'pipe', 'inherit'] });
	return new Promise((resolve, reject) => {
		child.stdout!.on('data', (c: Buffer) => /ready/.test(c.toString()) && resolve(child));
		child.on('exit', (code) => reject(new Error(`bench: a worker exited (${code})`)));
	});
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const rows: string[][] = [];
let tilt = 2;
for (const workers of [1, 2]) {
	const children = await Promise.all(Array.from({ length: workers }, startWorker));
	const ids: string[] = [];
	const t0 = Date.now();
	for (let i = 0; i < JOBS; i++) {
		const scheme = completeScheme(STATES);
		scheme.steps[0].kForward = tilt++;
		const created = await createScheme(access, { name: `K${STATES} ×${tilt}`, scheme });
		const outcome = await requestAudit(access, created.scheme.id);
		if (!outcome.job) throw new Error('bench: the audit did not become a job; raise the scheme size');
		ids.push(outcome.job.id);
	}
	let jobs: (typeof schema.engineJobs.$inferSelect)[] = [];
	for (;;) {
		jobs = await db.select().from(schema.engineJobs).where(inArray(schema.engineJobs.id, ids));
		if (jobs.every((j) => j.status !== 'queued' && j.status !== 'running')) break;
		await new Promise((r) => setTimeout(r, 200));
	}
	const seconds = (Date.now() - t0) / 1000;
	const failed = jobs.filter((j) => j.status !== 'done').length;
	const took = jobs.map((j) => (j.finishedAt!.getTime() - j.createdAt.getTime()) / 1000);
	rows.push([String(workers), String(JOBS), String(failed), seconds.toFixed(1), ((JOBS / seconds) * 60).toFixed(1), median(took).toFixed(1), String(new Set(jobs.map((j) => j.workedBy)).size)]);
	for (const c of children) c.kill('SIGTERM');
	await Promise.all(children.map((c) => new Promise((r) => c.once('exit', r))));
}

const header = ['workers', 'jobs', 'failed', 'wall s', 'jobs/min', 'median queued→done s', 'workers used'];
const width = header.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c].length)));
console.log(`\nAudit jobs (K${STATES}, ${JOBS} per run, 1 engine thread per worker) on ${(await import('node:os')).availableParallelism()} cores`);
console.log(header.map((h, c) => h.padStart(width[c])).join('  '));
console.log(width.map((w) => '-'.repeat(w)).join('  '));
for (const r of rows) console.log(r.map((v, c) => v.padStart(width[c])).join('  '));
await stopJobs();
await closeEnginePool();
await closeDb();
