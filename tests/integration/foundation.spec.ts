import { describe, expect, it } from 'vitest';
import { sql, eq } from 'drizzle-orm';
import nodemailer from 'nodemailer';
import { db, schema, makeLab } from './db';
import { databaseAnswers } from '../../src/lib/server/db/index';
import { findLabAccess, can } from '../../src/lib/server/access';
import { verifyPassword } from '../../src/lib/server/passwords';
import { TEST_PASSWORD } from './db';

describe('PostgreSQL as migrated by drizzle', () => {
	it('answers and has every table of the schema', async () => {
		expect(await databaseAnswers()).toBe(true);
		const rows = await db.execute<{ table_name: string }>(
			sql`select table_name from information_schema.tables where table_schema = 'public' order by table_name`
		);
		const names = rows.rows.map((r) => r.table_name);
		for (const t of ['users', 'labs', 'lab_members', 'accounts', 'sessions', 'verification_tokens', 'audits', 'signatures', 'activity_log']) {
			expect(names).toContain(t);
		}
	});

	it('keeps lab membership per lab: a member of one lab has no access to another', async () => {
		const a = await makeLab(['lead', 'reader']);
		const b = await makeLab(['lead']);
		const access = await findLabAccess(a.people.reader.id, a.lab.slug);
		expect(access?.role).toBe('reader');
		expect(await findLabAccess(a.people.reader.id, b.lab.slug)).toBeNull();
		expect(can('reader', 'model')).toBe(false);
		expect(can('modeller', 'model')).toBe(true);
		expect(can('modeller', 'review')).toBe(false);
	});

	it('stores bcrypt hashes, never passwords', async () => {
		const { people } = await makeLab(['modeller']);
		const [row] = await db.select().from(schema.users).where(eq(schema.users.id, people.modeller.id));
		expect(row.passwordHash).toMatch(/^\$2[aby]\$\d\d\$/);
		expect(row.passwordHash).not.toContain(TEST_PASSWORD);
		expect(await verifyPassword(TEST_PASSWORD, row.passwordHash)).toBe(true);
		expect(await verifyPassword('wrong', row.passwordHash)).toBe(false);
	});

	it('catches mail sent over SMTP in the local sink', async () => {
		const port = Number(process.env.SMTP_SINK_PORT);
		expect(port).toBeGreaterThan(0);
		const to = `sink-${Date.now()}@lab.example`;
		await nodemailer.createTransport(`smtp://127.0.0.1:${port}`).sendMail({ from: 'a@lab.example', to, subject: 'Sink check ✓', text: 'Hello from the test.' });
		let caught: (typeof schema.caughtMail.$inferSelect)[] = [];
		for (let i = 0; i < 50 && caught.length === 0; i++) {
			caught = await db.select().from(schema.caughtMail).where(sql`${to} = any(${schema.caughtMail.envelopeTo})`);
			if (caught.length === 0) await new Promise((r) => setTimeout(r, 100));
		}
		expect(caught).toHaveLength(1);
		expect(caught[0].subject).toBe('Sink check ✓');
		expect(caught[0].textBody).toBe('Hello from the test.');
	});
});
