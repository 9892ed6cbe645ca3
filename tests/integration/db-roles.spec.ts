/**
 * The app's database role holds no more than the app needs: not a superuser, owner of no table, no TRUNCATE, no
 * control of triggers, no UPDATE or DELETE of the append-only tables. TRUNCATE is refused even for the owner by
 * statement-level guards. Regression test: the app connected as the `postgres` superuser, and TRUNCATE of the
 * activity log and the signatures succeeded with the triggers on.
 */
import { afterAll, describe, expect, it } from 'vitest';
import pg from 'pg';

const app = new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 2 });
const owner = new pg.Pool({ connectionString: process.env.DATABASE_OWNER_URL ?? process.env.DATABASE_URL, max: 1 });
afterAll(async () => {
	await app.end();
	await owner.end();
});

/** PostgreSQL's message for a statement tried in a transaction that is always rolled back (nothing is ever emptied). */
async function refusal(pool: pg.Pool, statement: string): Promise<string> {
	const client = await pool.connect();
	try {
		await client.query('begin');
		await client.query(statement);
		return 'accepted';
	} catch (err) {
		return (err as Error).message;
	} finally {
		await client.query('rollback').catch(() => {});
		client.release();
	}
}

describe('the app connects as a least-privilege role', () => {
	it('is not a superuser and owns no table of the app or of the job queue', async () => {
		const { rows: [me] } = await app.query('select current_user as name, rolsuper, rolcreaterole, rolbypassrls from pg_roles where rolname = current_user');
		expect(me).toMatchObject({ rolsuper: false, rolcreaterole: false, rolbypassrls: false });
		const { rows } = await app.query("select tablename from pg_tables where schemaname in ('public', 'pgboss', 'drizzle') and tableowner = current_user");
		expect(rows).toEqual([]);
	});

	it('cannot TRUNCATE, switch triggers off, or UPDATE and DELETE signatures and the activity log', async () => {
		// [trade] PostgreSQL: TRUNCATE needs its own privilege; ALTER TABLE needs ownership; replica mode needs a superuser.
		for (const table of ['activity_log', 'signatures', 'review_events', 'audits', 'scheme_revisions'])
			expect(await refusal(app, `truncate ${table} cascade`), table).toMatch(/permission denied/);
		expect(await refusal(app, 'alter table signatures disable trigger all')).toMatch(/must be owner/);
		expect(await refusal(app, 'alter table activity_log disable trigger activity_log_append_only')).toMatch(/must be owner/);
		expect(await refusal(app, 'set session_replication_role = replica')).toMatch(/permission denied/);
		expect(await refusal(app, "update signatures set comment = 'edited'")).toMatch(/permission denied/);
		expect(await refusal(app, 'delete from signatures')).toMatch(/permission denied/);
		expect(await refusal(app, "update activity_log set summary = 'edited'")).toMatch(/permission denied/);
		expect(await refusal(app, 'delete from audits')).toMatch(/permission denied/);
	});

	it('still does its job: reads and writes its tables and the job queue', async () => {
		expect(await refusal(app, "insert into activity_log (kind, summary) values ('sign-in', 'role check')")).toBe('accepted');
		expect(await refusal(app, 'select count(*) from pgboss.job')).toBe('accepted');
		expect(await refusal(app, "update audits set status = status where false")).toBe('accepted');
	});

	it('statement-level guards refuse TRUNCATE of the immutable tables even for their owner', async () => {
		// [trade] pg_trigger.tgtype bits: 1 row-level, 2 before, 32 truncate. A guard is BEFORE TRUNCATE FOR EACH STATEMENT.
		const { rows } = await owner.query(
			"select c.relname from pg_trigger t join pg_class c on c.oid = t.tgrelid where not t.tgisinternal and t.tgenabled <> 'D' and (t.tgtype & 35) = 34"
		);
		const guarded = rows.map((r) => r.relname as string);
		for (const table of ['activity_log', 'signatures', 'review_events', 'scheme_revisions', 'audits']) expect(guarded, table).toContain(table);
		// And one real attempt, as the owner, on the table nothing references (no CASCADE, so only its own lock is
		// taken; the other test files write to it at the same time). Rolled back whatever happens.
		expect(await refusal(owner, "set local lock_timeout = '20s'; truncate only activity_log")).toMatch(/append-only: it cannot be truncated/);
	});
});
