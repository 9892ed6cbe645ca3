/**
 * The account page's actions: creating a token (shown once, then usable on the API), revoking it (401 from then
 * on), and changing the password (current one required, minimum length from passwords.ts).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { db, schema, makeLab, TEST_PASSWORD } from './db';
import { api } from './request';
import { actions, load } from '../../src/routes/(app)/account/+page.server';
import { MIN_PASSWORD_LENGTH, verifyPassword } from '../../src/lib/server/passwords';
import { stopJobs } from '../../src/lib/server/jobs';

type Person = { id: string; email: string; name: string | null };
type Result = Record<string, any>;

function actionEvent(user: Person | null, fields: Record<string, string>) {
	const form = new FormData();
	for (const [k, v] of Object.entries(fields)) form.set(k, v);
	const url = new URL('http://127.0.0.1:5180/account');
	return { locals: { user, via: 'session' }, url, request: new Request(url, { method: 'POST', body: form }) } as never;
}

/** A fail() result carries { status, data }; a success is the plain object. */
function unwrap(result: unknown): { status: number; data: Result } {
	const r = result as Result;
	return r && typeof r.status === 'number' && 'data' in r ? { status: r.status, data: r.data } : { status: 200, data: r };
}

afterAll(async () => {
	await stopJobs();
});

describe('account actions', () => {
	it('creates a token that works on the API, lists it by prefix only, and revokes it', async () => {
		const { lab, people } = await makeLab(['reader']);
		const me = people.reader;
		const created = unwrap(await actions.createToken(actionEvent(me, { name: 'plate reader script' })));
		expect(created.status).toBe(200);
		const token: string = created.data.created.token;
		expect(token).toMatch(/^esc_[A-Za-z0-9_-]{32}$/);
		expect((await api('GET', `/api/v1/labs/${lab.slug}`, { token })).status).toBe(200);

		const page = (await load({ locals: { user: me, via: 'session' }, url: new URL('http://127.0.0.1/account') } as never)) as Result;
		expect(page.labs.map((l: Result) => [l.slug, l.role])).toEqual([[lab.slug, 'reader']]);
		expect(page.tokens).toHaveLength(1);
		expect(page.tokens[0]).toMatchObject({ name: 'plate reader script', revokedAt: null });
		expect(token.startsWith(page.tokens[0].prefix)).toBe(true);
		expect(JSON.stringify(page)).not.toContain(token);

		const revoked = unwrap(await actions.revokeToken(actionEvent(me, { id: page.tokens[0].id })));
		expect(revoked.status).toBe(200);
		expect((await api('GET', `/api/v1/labs/${lab.slug}`, { token })).status).toBe(401);
		expect(unwrap(await actions.revokeToken(actionEvent(me, { id: page.tokens[0].id }))).status).toBe(404);
	});

	it('refuses a nameless token and another person’s token', async () => {
		const { people } = await makeLab(['lead', 'reader']);
		expect(unwrap(await actions.createToken(actionEvent(people.lead, { name: '   ' }))).status).toBe(400);
		const created = unwrap(await actions.createToken(actionEvent(people.lead, { name: 'lead script' })));
		const page = (await load({ locals: { user: people.lead, via: 'session' }, url: new URL('http://127.0.0.1/account') } as never)) as Result;
		expect(created.status).toBe(200);
		expect(unwrap(await actions.revokeToken(actionEvent(people.reader, { id: page.tokens[0].id }))).status).toBe(404);
	});

	it('changes the password only with the current one and a long enough new one', async () => {
		const { people } = await makeLab(['modeller']);
		const me = people.modeller;
		const short = 'x'.repeat(MIN_PASSWORD_LENGTH - 1);
		const fresh = 'a-new-password-for-tests';
		expect(unwrap(await actions.changePassword(actionEvent(me, { current: TEST_PASSWORD, next: short, confirm: short }))).status).toBe(400);
		expect(unwrap(await actions.changePassword(actionEvent(me, { current: TEST_PASSWORD, next: fresh, confirm: fresh + '!' }))).status).toBe(400);
		const wrong = unwrap(await actions.changePassword(actionEvent(me, { current: 'not-the-password', next: fresh, confirm: fresh })));
		expect(wrong.status).toBe(400);
		expect(wrong.data.error).toMatch(/current password/);
		const ok = unwrap(await actions.changePassword(actionEvent(me, { current: TEST_PASSWORD, next: fresh, confirm: fresh })));
		expect(ok.data.changed).toBe(true);
		const [row] = await db.select().from(schema.users).where(eq(schema.users.id, me.id));
		expect(await verifyPassword(fresh, row.passwordHash)).toBe(true);
		expect(await verifyPassword(TEST_PASSWORD, row.passwordHash)).toBe(false);
	});
});
