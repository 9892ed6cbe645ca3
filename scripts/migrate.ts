/**
 * Applies the migrations in drizzle/ and sets up pg-boss's schema and queues, as the database's owner
 * (DATABASE_OWNER_URL; DATABASE_URL when it is not set), then gives the app's role (the user of DATABASE_URL) the
 * least it needs: no superuser, not the owner of any table, no TRUNCATE, REFERENCES or TRIGGER, and no UPDATE or
 * DELETE on the append-only tables. Only the owner can switch triggers off, and the app never connects as it.
 * Creates the app's role when it is missing and the owner may create roles (the local clusters of scripts/lib.sh).
 * Safe to repeat.
 */
import pg from 'pg';
import PgBoss from 'pg-boss';
import { drizzle } from 'drizzle-orm/node-postgres';
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import { QUEUES } from '../src/lib/server/jobs/index';

const appUrl = process.env.DATABASE_URL;
const ownerUrl = process.env.DATABASE_OWNER_URL ?? appUrl;
if (!appUrl || !ownerUrl) throw new Error('migrate: DATABASE_URL is not set. `npm start`, `npm run dev` and `npm test` set it (scripts/lib.sh).');

/** Append-only tables: the app inserts and reads them, nothing more (triggers refuse the rest for everyone). */
const APPEND_ONLY = ['activity_log', 'signatures', 'review_events', 'scheme_revisions'];

const owner = new pg.Pool({ connectionString: ownerUrl, max: 1 });
await migrate(drizzle(owner), { migrationsFolder: new URL('../drizzle', import.meta.url).pathname });

// pg-boss creates its schema and a table per queue: DDL, so here, as the owner, not in the app.
const boss = new PgBoss({ connectionString: ownerUrl, schema: 'pgboss', max: 1, supervise: false, schedule: false });
boss.on('error', (err) => console.error('[escapement] job queue:', err.message));
await boss.start();
for (const queue of Object.values(QUEUES)) await boss.createQueue(queue);
await boss.stop({ graceful: false, wait: true });

const app = decodeURIComponent(new URL(appUrl).username);
const { rows: [me] } = await owner.query<{ name: string; createrole: boolean }>(
	'select current_user as name, (rolsuper or rolcreaterole) as createrole from pg_roles where rolname = current_user'
);
if (app && app !== me.name) {
	const role = pg.escapeIdentifier(app);
	const { rowCount } = await owner.query('select 1 from pg_roles where rolname = $1', [app]);
	if (!rowCount) {
		if (!me.createrole) throw new Error(`migrate: the app's role "${app}" does not exist and ${me.name} may not create roles; create it (LOGIN, nothing else) and run again.`);
		await owner.query(`create role ${role} login nosuperuser nocreatedb nocreaterole noreplication nobypassrls`);
	}
	const password = decodeURIComponent(new URL(appUrl).password);
	if (password && me.createrole) await owner.query(`alter role ${role} password ${pg.escapeLiteral(password)}`);
	const { rows: [{ database }] } = await owner.query<{ database: string }>('select current_database() as database');
	const statements = [
		`grant connect, temporary on database ${pg.escapeIdentifier(database)} to ${role}`,
		`grant usage on schema public, pgboss to ${role}`,
		`revoke all on all tables in schema public from ${role}`,
		`grant select, insert, update, delete on all tables in schema public to ${role}`,
		`revoke update, delete on ${APPEND_ONLY.join(', ')} from ${role}`,
		`revoke delete on audits from ${role}`,
		`grant usage, select on all sequences in schema public to ${role}`,
		`revoke all on all tables in schema pgboss from ${role}`,
		`grant select, insert, update, delete on all tables in schema pgboss to ${role}`,
		`grant usage, select on all sequences in schema pgboss to ${role}`,
		`grant execute on all functions in schema pgboss to ${role}`,
		// Queue tables that pg-boss adds later (created by the owner) are the app's to use as well.
		`alter default privileges in schema pgboss grant select, insert, update, delete on tables to ${role}`
	];
	for (const statement of statements) await owner.query(statement);
}
await owner.end();
console.log(`[escapement] migrations applied${app && app !== me.name ? `; the app connects as ${app}` : ''}`);
