/**
 * npm run backup / npm run restore: a pg_dump archive of the test database, restored into a fresh database of the
 * same cluster, holds the same rows, and every signed audit in it verifies (its hash recomputed from the restored
 * inputs and results equals the stored and the signed one). The restore script runs that check itself.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { db, schema, makeLab, TEST_PASSWORD } from './db';
import { and, eq } from 'drizzle-orm';
import { createScheme } from '../../src/lib/server/schemes';
import { runAudit } from '../../src/lib/server/audits';
import { signAudit, submitForReview } from '../../src/lib/server/reviews';
import { stopJobs } from '../../src/lib/server/jobs';
import { stepperWithFutileBranch } from '../../src/lib/server/demo/schemes';
import type { LabAccess } from '../../src/lib/server/access';

const source = new URL(process.env.DATABASE_URL!);
const restoredName = `escapement_restored_${process.pid}`;
const env = { ...process.env, PGPORT: source.port, PGDATABASE: source.pathname.slice(1) };
const dir = mkdtempSync(join(tmpdir(), 'escapement-backup-'));
const file = join(dir, 'test.dump');
let signedIds: string[] = [];
let labId: string;

/** Rows of this file's lab (other test files write to the same database at the same time). */
async function labCounts(client: { query: (q: string, v: unknown[]) => Promise<{ rows: { n: string }[] }> }, labId: string) {
	const counts: Record<string, number> = {};
	const queries: Record<string, string> = {
		members: 'select count(*) as n from lab_members where lab_id = $1',
		schemes: 'select count(*) as n from schemes where lab_id = $1',
		revisions: 'select count(*) as n from scheme_revisions r join schemes s on s.id = r.scheme_id where s.lab_id = $1',
		audits: 'select count(*) as n from audits where lab_id = $1',
		signatures: 'select count(*) as n from signatures g join audits a on a.id = g.audit_id where a.lab_id = $1',
		reviewEvents: 'select count(*) as n from review_events e join audits a on a.id = e.audit_id where a.lab_id = $1',
		activity: 'select count(*) as n from activity_log where lab_id = $1'
	};
	for (const [name, q] of Object.entries(queries)) counts[name] = Number((await client.query(q, [labId])).rows[0].n);
	return counts;
}

beforeAll(async () => {
	const { lab, people } = await makeLab(['modeller', 'reviewer']);
	labId = lab.id;
	const access = (role: 'modeller' | 'reviewer'): LabAccess => ({
		lab,
		role,
		user: { id: people[role].id, email: people[role].email, name: people[role].name }
	});
	const { scheme } = await createScheme(access('modeller'), { scheme: { ...stepperWithFutileBranch(), name: 'Kestrel stepper (backup)' } });
	for (let i = 0; i < 2; i++) {
		const audit = await runAudit(access('modeller'), scheme.id, { conditions: { forcePN: i } });
		await submitForReview(access('modeller'), audit.id, 'please check');
		await signAudit(access('reviewer'), audit.id, { password: TEST_PASSWORD, comment: 'Balanced.' });
	}
	signedIds = (await db.select({ id: schema.audits.id }).from(schema.audits).where(and(eq(schema.audits.labId, lab.id), eq(schema.audits.status, 'signed')))).map((r) => r.id);
});

afterAll(async () => {
	await stopJobs();
	spawnSync('bash', ['-c', `cd / && runuser -u postgres -- /usr/lib/postgresql/15/bin/dropdb -h 127.0.0.1 -p ${source.port} -U postgres --if-exists --force ${restoredName}`]);
	rmSync(dir, { recursive: true, force: true });
});

describe('backup and restore', () => {
	it('restore into a fresh database keeps every row and every signed audit verifies [trade]', { timeout: 120_000 }, async () => {
		expect(signedIds).toHaveLength(2);
		execFileSync('bash', ['scripts/backup.sh', file], { env, stdio: 'pipe' });
		expect(statSync(file).size).toBeGreaterThan(0);
		const restore = spawnSync('bash', ['scripts/restore.sh', file, restoredName], { env, encoding: 'utf8' });
		// Every signed audit of the database is checked, those of other test files' labs too (some tamper with theirs
		// on purpose): ours verify, and the restore fails exactly when some audit does not.
		const lines = restore.stdout.trim().split('\n');
		const total = /^signed audits: (\d+) verified, (\d+) failed$/.exec(lines.at(-1) ?? '');
		expect(total, restore.stdout + restore.stderr).not.toBeNull();
		expect(Number(total![1])).toBeGreaterThanOrEqual(signedIds.length);
		for (const id of signedIds) expect(restore.stdout).toMatch(new RegExp(`^ok +${id} `, 'm'));
		const failedIds = lines.filter((l) => l.startsWith('FAILED')).map((l) => l.split(/\s+/)[1]);
		expect(failedIds.filter((id) => signedIds.includes(id))).toEqual([]);
		expect(failedIds).toHaveLength(Number(total![2]));
		expect(restore.status === 0, restore.stderr).toBe(failedIds.length === 0);

		const restored = new pg.Client({ connectionString: `postgres://postgres@127.0.0.1:${source.port}/${restoredName}` });
		await restored.connect();
		try {
			const original = await db.$client.connect();
			try {
				const counts = await labCounts(restored, labId);
				expect(counts).toMatchObject({ members: 2, schemes: 1, revisions: 1, audits: 2, signatures: 2, reviewEvents: 4 });
				expect(counts).toEqual(await labCounts(original, labId));
			} finally {
				original.release();
			}
			// the immutability triggers came back with the data: a signed audit still cannot be changed
			await expect(restored.query(`update audits set verdict = 'consistent' where id = $1`, [signedIds[0]])).rejects.toThrow();
		} finally {
			await restored.end();
		}
	});

	it('refuses to restore over an existing database unless told to replace it', () => {
		const again = spawnSync('bash', ['scripts/restore.sh', file, restoredName], { env, encoding: 'utf8' });
		expect(again.status).not.toBe(0);
		expect(again.stderr).toMatch(/exists; restore into a new name/);
	});
});
