/**
 * Lost mail: the review request is queued in the submission's own transaction. A process that submits audits is
 * killed (SIGKILL) at random moments; afterwards every committed submission has its mail queued exactly once, and
 * no mail exists for a submission that did not commit. Regression test: the mail used to be queued after the commit,
 * so a crash in between lost it for good.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { and, eq, sql } from 'drizzle-orm';
import { db, schema, makeLab } from './db';
import { createScheme } from '../../src/lib/server/schemes';
import { runAudit } from '../../src/lib/server/audits';
import { getBoss, stopJobs } from '../../src/lib/server/jobs';
import { stepperWithFutileBranch } from '../../src/lib/server/demo/schemes';
import type { LabAccess } from '../../src/lib/server/access';

beforeAll(async () => {
	await getBoss(); // the queue's tables exist, as after `npm start`'s migrations
});
afterAll(async () => {
	await stopJobs();
});

/** mulberry32: a small seeded generator, so that a failing run can be repeated with its seed. [trade] */
function seeded(seed: number) {
	return () => {
		seed = (seed + 0x6d2b79f5) | 0;
		let t = Math.imul(seed ^ (seed >>> 15), 1 | seed);
		t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

/**
 * Runs the child and kills it `killAfterMs` after its `afterCommits`-th committed submission (0: after it is ready),
 * so that the moment falls among the submissions however busy the machine is. Resolves with whether it finished.
 */
function submitAndKill(access: LabAccess, auditIds: string[], afterCommits: number, killAfterMs: number): Promise<{ finished: boolean }> {
	return new Promise((resolve, reject) => {
		const child = spawn(process.execPath, ['--import', 'tsx', new URL('./children/submit-audits.ts', import.meta.url).pathname], {
			env: { ...process.env, SUBMIT_JOB: JSON.stringify({ access, auditIds }) },
			stdio: ['ignore', 'pipe', 'pipe']
		});
		let out = '';
		let err = '';
		let timer: NodeJS.Timeout | undefined;
		child.stdout.on('data', (chunk: Buffer) => {
			out += chunk.toString();
			const commits = out.split('committed ').length - 1;
			if (!timer && out.includes('ready\n') && commits >= afterCommits) timer = setTimeout(() => child.kill('SIGKILL'), killAfterMs);
		});
		child.stderr.on('data', (chunk: Buffer) => (err += chunk.toString()));
		child.on('error', reject);
		child.on('exit', (code, signal) => {
			clearTimeout(timer);
			if (signal === 'SIGKILL' || code === 0) resolve({ finished: out.includes('done\n') });
			else reject(new Error(`the submitting child failed (${code}): ${err.slice(-2000)}`));
		});
	});
}

describe('review mail survives a crash of the submitting process', () => {
	it('every committed submission has exactly one review mail queued, after SIGKILL at random moments', async () => {
		const seed = Number(process.env.LOST_MAIL_SEED ?? Date.now() % 100_000);
		const random = seeded(seed);
		const { lab, people } = await makeLab(['modeller', 'reviewer']);
		const access: LabAccess = { lab, role: 'modeller', user: { id: people.modeller.id, email: people.modeller.email, name: people.modeller.name } };
		const created = await createScheme(access, { scheme: stepperWithFutileBranch() });
		const audits: string[] = [];
		for (let i = 0; i < 40; i++) audits.push((await runAudit(access, created.scheme.id)).id);

		const status = async (id: string) => (await db.select({ status: schema.audits.status }).from(schema.audits).where(eq(schema.audits.id, id)))[0].status;
		let killedMidway = 0;
		for (let round = 0; round < 4; round++) {
			const pending: string[] = [];
			for (const id of audits) if ((await status(id)) === 'draft') pending.push(id);
			if (pending.length === 0) break;
			// Kill anywhere from the child's start (its first submission also starts pg-boss, the widest gap a mail
			// queued after the commit could fall into); the later rounds after 1 to 7 submissions, so some always commit.
			const afterCommits = round === 0 ? 0 : 1 + Math.floor(random() * 7);
			const { finished } = await submitAndKill(access, pending, afterCommits, Math.floor(random() * (afterCommits === 0 ? 500 : 40)));
			if (!finished) killedMidway++;
		}

		const report: string[] = [];
		let committed = 0;
		for (const id of audits) {
			const events = await db.select().from(schema.reviewEvents).where(and(eq(schema.reviewEvents.auditId, id), eq(schema.reviewEvents.kind, 'submitted')));
			const { rows } = await db.execute(sql`select 1 from pgboss.job where name = 'mail' and data->>'text' like ${'%/audits/' + id + '%'}`);
			committed += events.length;
			if (rows.length !== events.length) report.push(`${id}: ${events.length} submission(s), ${rows.length} mail(s)`);
		}
		console.log(`lost-mail: seed ${seed}, ${killedMidway} of the runs killed midway, ${committed} of ${audits.length} submissions committed`);
		expect(report, `seed ${seed}`).toEqual([]); // [der] one mail per committed submission, none for the others
		expect(killedMidway).toBeGreaterThan(0);
		expect(committed).toBeGreaterThan(0);
	}, 120_000);
});
