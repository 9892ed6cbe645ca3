/**
 * A PostgreSQL restart under load (pg_ctl restart of the test cluster, as its postgres user, mid-test): requests
 * through hooks.server.ts keep coming (reads, writes, health checks), a worker process and the mail sink run beside.
 * During the gap requests answer 503 with the database named (never 500), /api/health says "down" and then "up",
 * every write either happened completely or not at all, and afterwards everything works again, the worker included.
 * vitest itself fails the run on an unhandled rejection, so none may come out of the pools or pg-boss.
 */
import { execFile, spawn, type ChildProcess } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { connect } from 'node:net';
import { promisify } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, inArray } from 'drizzle-orm';
import { db, makeLab, schema } from '../integration/db';
import { api, body, tokenFor } from '../integration/request';
import { triangleScheme } from '../integration/api-fixtures';
import { completeScheme } from '../../src/lib/engine/random-scheme';
import { auditWork, closeEnginePool } from '../../src/lib/server/engine-pool';
import { stopJobs } from '../../src/lib/server/jobs';

const run = promisify(execFile);
const PGBIN = '/usr/lib/postgresql/15/bin';
const port = new URL(process.env.DATABASE_URL!).port;

/** The cluster's data folder, where scripts/lib.sh's pg_data_base puts it: .data/test, or /var/tmp/escapement-<hash>/test. */
function clusterFolder(): string {
	const root = process.cwd();
	const candidates = [`${root}/.data/test`, `/var/tmp/escapement-${createHash('sha256').update(root).digest('hex').slice(0, 12)}/test`];
	const found = candidates.find((dir) => existsSync(`${dir}/postmaster.pid`) && readFileSync(`${dir}/postmaster.pid`, 'utf8').split('\n')[3]?.trim() === port);
	if (!found) throw new Error(`db-restart: no running cluster on port ${port} in ${candidates.join(' or ')}`);
	return found;
}

const asPostgres = (args: string[]) =>
	process.getuid?.() === 0 ? run('runuser', ['-u', 'postgres', '--', ...args], { cwd: '/', timeout: 90_000 }) : run(args[0], args.slice(1), { timeout: 90_000 });

let home: Awaited<ReturnType<typeof makeLab>>;
let token: string;
let worker: ChildProcess;
let workerLog = '';

beforeAll(async () => {
	home = await makeLab(['lead', 'modeller']);
	token = await tokenFor(home.people.modeller.id);
	process.env.ENGINE_WORK_BUDGET = String(auditWork(completeScheme(5)));
	worker = spawn(process.execPath, ['--import', 'tsx', 'scripts/worker.ts'], { env: { ...process.env, ENGINE_THREADS: '1' }, stdio: ['ignore', 'pipe', 'pipe'] });
	worker.stdout!.on('data', (c: Buffer) => (workerLog += c.toString()));
	worker.stderr!.on('data', (c: Buffer) => (workerLog += c.toString()));
	const deadline = Date.now() + 80_000;
	while (!/ready/.test(workerLog) && Date.now() < deadline) await new Promise((r) => setTimeout(r, 200));
	if (!/ready/.test(workerLog)) throw new Error(`the worker did not start: ${workerLog}`);
});

afterAll(async () => {
	delete process.env.ENGINE_WORK_BUDGET;
	worker?.kill('SIGKILL');
	await stopJobs().catch(() => {});
	await closeEnginePool();
});

/** True when the mail sink on SMTP_SINK_PORT greets a new connection (220). */
function sinkGreets(): Promise<boolean> {
	return new Promise((resolve) => {
		const socket = connect(Number(process.env.SMTP_SINK_PORT), '127.0.0.1');
		const done = (ok: boolean) => {
			socket.destroy();
			resolve(ok);
		};
		socket.once('data', (d) => done(d.toString().startsWith('220')));
		socket.once('error', () => done(false));
		setTimeout(() => done(false), 5000).unref();
	});
}

describe('a PostgreSQL restart under load', () => {
	it('answers 503 during the gap, reports the database down then up, loses or half-writes nothing, and works after', async () => {
		const lab = home.lab.slug;
		const statuses: number[] = [];
		const health: string[] = [];
		const created: { name: string; status: number }[] = [];
		let stop = false;
		let n = 0;
		const load = (async () => {
			while (!stop) {
				const name = `Written during the restart ${n++}`;
				const [list, write, check] = await Promise.all([
					api('GET', `/api/v1/labs/${lab}/schemes`, { token }),
					api('POST', `/api/v1/labs/${lab}/schemes`, { token, json: { name, scheme: triangleScheme(name) } }),
					api('GET', '/api/health')
				]);
				statuses.push(list.status, write.status);
				created.push({ name, status: write.status });
				if (list.status === 503) expect((await body<{ error: { code: string } }>(list)).error.code).toBe('database_unavailable');
				health.push(((await body<{ database: string }>(check)).database));
				await new Promise((r) => setTimeout(r, 20));
			}
		})();
		await new Promise((r) => setTimeout(r, 1500));
		// -l: the new server writes to its log file, not to our pipes (execFile would wait for them to close)
		const folder = clusterFolder();
		await asPostgres([`${PGBIN}/pg_ctl`, '-D', folder, '-l', `${folder}/server.log`, '-m', 'fast', '-w', '-t', '60', 'restart']);
		// until the health check has said "up" again for a while
		const deadline = Date.now() + 60_000;
		while (Date.now() < deadline && !(health.lastIndexOf('down') >= 0 && health.slice(health.lastIndexOf('down') + 1).filter((h) => h === 'up').length >= 5))
			await new Promise((r) => setTimeout(r, 200));
		stop = true;
		await load;

		// [trade] a dependency outage is 503 Service Unavailable, never 500; the health check saw it go and come back
		expect(statuses).toContain(503);
		expect(statuses.filter((s) => s !== 200 && s !== 201 && s !== 503)).toEqual([]);
		expect(health).toContain('down');
		expect(health.at(-1)).toBe('up');

		// nothing half-written: each write that answered 201 is there with its revision; the others left no trace
		const names = created.map((c) => c.name);
		const schemes = await db.select({ id: schema.schemes.id, name: schema.schemes.name }).from(schema.schemes).where(inArray(schema.schemes.name, names));
		const revisions = schemes.length
			? await db.select({ schemeId: schema.schemeRevisions.schemeId }).from(schema.schemeRevisions).where(inArray(schema.schemeRevisions.schemeId, schemes.map((s) => s.id)))
			: [];
		expect(schemes.map((s) => s.name).sort()).toEqual(created.filter((c) => c.status === 201).map((c) => c.name).sort());
		expect(new Set(revisions.map((r) => r.schemeId)).size).toBe(schemes.length);

		// after: the API, the worker and the mail sink all work again
		const after = await api('GET', `/api/v1/labs/${lab}/schemes`, { token });
		expect(after.status).toBe(200);
		expect(worker.exitCode).toBeNull();
		expect(await sinkGreets()).toBe(true);
		const dense = completeScheme(6);
		const made = await body<{ scheme: { id: string } }>(await api('POST', `/api/v1/labs/${lab}/schemes`, { token, json: { name: 'K6 after the restart', scheme: dense } }));
		const queued = await api('POST', `/api/v1/labs/${lab}/schemes/${made.scheme.id}/audits`, { token, json: {} });
		expect(queued.status).toBe(202);
		const { job } = await body<{ job: { id: string } }>(queued);
		let status = 'queued';
		for (let i = 0; i < 300 && (status === 'queued' || status === 'running'); i++) {
			await new Promise((r) => setTimeout(r, 200));
			[{ status }] = await db.select({ status: schema.engineJobs.status }).from(schema.engineJobs).where(eq(schema.engineJobs.id, job.id));
		}
		expect(status, workerLog).toBe('done');
	});
});
