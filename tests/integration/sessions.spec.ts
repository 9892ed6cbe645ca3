/**
 * Sessions and sign-in, through the real sign-in and sign-out form actions and hooks.server.ts (in-process): a
 * cookie dies with sign-out and with a password change, lives a fixed time, every password check shares one pause
 * kept in PostgreSQL, link requests are limited and never say whether an account exists, `next` stays on the site.
 */
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { and, eq, like } from 'drizzle-orm';
import { db, makeLab, schema, TEST_PASSWORD } from './db';
import { CookieJar, page, signInAs } from './pages';
import { api, tokenFor } from './request';
import { triangleScheme } from './api-fixtures';
import { SIGN_IN_LIMIT, LINK_LIMIT, signInBlockedFor } from '../../src/lib/server/rate-limit';
import { SESSION_MAX_AGE_S } from '../../src/lib/server/sessions';
import { stopJobs } from '../../src/lib/server/jobs';

let lab: Awaited<ReturnType<typeof makeLab>>;
beforeAll(async () => {
	lab = await makeLab(['lead', 'modeller', 'reviewer', 'reader']);
});
afterAll(async () => {
	await stopJobs();
});

/** The signed-in person of a browser, as the app sees it (null: signed out). */
async function whoIs(jar: CookieJar): Promise<string | null> {
	const res = await page('GET', '/account', { jar });
	if (res.status === 303) return null;
	expect(res.status).toBe(200);
	return ((await res.json()) as { person: { email: string } }).person.email;
}

describe('sessions', () => {
	it('signs in with the password and the cookie identifies the person', async () => {
		const { jar, response } = await signInAs(lab.people.reader.email);
		expect(response.status).toBe(302);
		expect(await whoIs(jar)).toBe(lab.people.reader.email);
	});

	// Regression: the JWT cookie used to stay valid for its whole life after sign-out (a copy kept working).
	it('a copy of the cookie stops working after sign-out [trade]', async () => {
		const { jar } = await signInAs(lab.people.reader.email);
		const copy = new CookieJar();
		copy.values = new Map(jar.values);
		const out = await page('POST', '/signout', { jar });
		expect(out.status).toBe(302);
		expect(await whoIs(jar)).toBeNull();
		expect(await whoIs(copy)).toBeNull();
	});

	it('a password change signs out every other browser but keeps the one that changed it [trade]', async () => {
		const { people } = await makeLab(['modeller']);
		const email = people.modeller.email;
		const { jar: mine } = await signInAs(email);
		const { jar: stolen } = await signInAs(email);
		const next = 'a-new-password-22';
		const res = await page('POST', '/account?/changePassword', { jar: mine, form: { current: TEST_PASSWORD, next, confirm: next } });
		expect(res.status).toBe(200);
		expect(await whoIs(mine)).toBe(email);
		expect(await whoIs(stolen)).toBeNull();
	});

	it('ends a session a fixed time after sign-in however active it was (no renewal) [der]', async () => {
		const { jar } = await signInAs(lab.people.lead.email);
		expect(await whoIs(jar)).toBe(lab.people.lead.email);
		const now = Date.now();
		vi.useFakeTimers({ toFake: ['Date'] });
		try {
			// Active every hour: each request would renew an expiring cookie; the server-side limit stays fixed.
			for (let h = 1; h < SESSION_MAX_AGE_S / 3600; h++) {
				vi.setSystemTime(now + h * 3600_000);
				expect(await whoIs(jar)).toBe(lab.people.lead.email);
			}
			vi.setSystemTime(now + SESSION_MAX_AGE_S * 1000 + 60_000);
			expect(await whoIs(jar)).toBeNull();
		} finally {
			vi.useRealTimers();
		}
	});
});

describe('API tokens', () => {
	it('expire when created with a lifetime; without one they live until revoked', async () => {
		const { jar } = await signInAs(lab.people.modeller.email);
		const created = await page('POST', '/account?/createToken', { jar, form: { name: 'thirty days', lifetime: '30' } });
		expect(created.status).toBe(200);
		const token = ((await created.json()) as any).data.created.token as string;
		expect((await api('GET', '/api/v1/labs', { token })).status).toBe(200);
		vi.useFakeTimers({ toFake: ['Date'] });
		try {
			vi.setSystemTime(Date.now() + 31 * 86_400_000);
			expect((await api('GET', '/api/v1/labs', { token })).status).toBe(401);
			expect((await api('GET', '/api/v1/labs', { token: await tokenFor(lab.people.modeller.id) })).status).toBe(200);
		} finally {
			vi.useRealTimers();
		}
	});
	it('refuses an unknown lifetime', async () => {
		const { jar } = await signInAs(lab.people.modeller.email);
		const res = await page('POST', '/account?/createToken', { jar, form: { name: 'forever and a day', lifetime: '100000' } });
		expect(res.status).toBe(400);
	});
});

describe('one pause for every password check', () => {
	it('pauses sign-in after the limit of wrong passwords, and the pause is in PostgreSQL [trade]', async () => {
		const { people } = await makeLab(['reader']);
		const email = people.reader.email;
		for (let i = 0; i < SIGN_IN_LIMIT.failures; i++) expect((await signInAs(email, 'wrong-password-0')).response.status).toBe(400);
		const paused = await signInAs(email, TEST_PASSWORD);
		expect(paused.response.status).toBe(429);
		const rows = await db.select().from(schema.rateLimits).where(like(schema.rateLimits.key, `%${email}`));
		expect(rows.length).toBe(1);
		expect(rows[0].points).toBe(SIGN_IN_LIMIT.failures);
		const logged = await db.select().from(schema.activityLog).where(and(eq(schema.activityLog.actorId, people.reader.id), eq(schema.activityLog.kind, 'sign-in-failed')));
		expect(logged.length).toBe(SIGN_IN_LIMIT.failures);
	});

	it('wrong passwords at password change count against sign-in, and pause the password change too', async () => {
		const { people } = await makeLab(['modeller']);
		const email = people.modeller.email;
		const { jar } = await signInAs(email);
		for (let i = 0; i < SIGN_IN_LIMIT.failures; i++) {
			const res = await page('POST', '/account?/changePassword', { jar, form: { current: `guess-number-${i}`, next: 'whatever-1234', confirm: 'whatever-1234' } });
			expect(res.status).toBe(400);
		}
		const again = await page('POST', '/account?/changePassword', { jar, form: { current: TEST_PASSWORD, next: 'whatever-1234', confirm: 'whatever-1234' } });
		expect(again.status).toBe(429);
		expect((await signInAs(email)).response.status).toBe(429);
		expect(await signInBlockedFor(email)).toBeGreaterThan(0);
	});

	it('wrong passwords at signing count too: a stolen token cannot guess through /sign', async () => {
		const { people, lab: l } = await makeLab(['modeller', 'reviewer']);
		const [modeller, reviewer] = [await tokenFor(people.modeller.id), await tokenFor(people.reviewer.id)];
		const created = await api('POST', `/api/v1/labs/${l.slug}/schemes`, { token: modeller, json: { name: 'Guessing target', scheme: triangleScheme('Guessing target') } });
		const schemeId = ((await created.json()) as any).scheme.id;
		const run = await api('POST', `/api/v1/labs/${l.slug}/schemes/${schemeId}/audits`, { token: modeller, json: {} });
		const auditId = ((await run.json()) as any).audit.id;
		expect((await api('POST', `/api/v1/labs/${l.slug}/audits/${auditId}/submit`, { token: modeller, json: { note: 'check' } })).status).toBe(200);
		const sign = (password: string) => api('POST', `/api/v1/labs/${l.slug}/audits/${auditId}/sign`, { token: reviewer, json: { password, comment: 'ok' } });
		for (let i = 0; i < SIGN_IN_LIMIT.failures; i++) expect((await sign(`guess-${i}`)).status).toBe(403);
		expect((await sign(TEST_PASSWORD)).status).toBe(429);
		expect((await signInAs(people.reviewer.email)).response.status).toBe(429);
		const logged = await db.select().from(schema.activityLog).where(and(eq(schema.activityLog.actorId, people.reviewer.id), eq(schema.activityLog.kind, 'sign-failed')));
		expect(logged.length).toBe(SIGN_IN_LIMIT.failures);
	});
});

describe('sign-in links', () => {
	const request = (email: string) => page('POST', '/signin', { form: { providerId: 'email-link', email, redirectTo: '/labs' } });

	it('answers the same for an address with and without an account [trade]', async () => {
		const known = await request(lab.people.reader.email);
		const unknown = await request(`nobody-${lab.tag}@lab.example`);
		expect(unknown.status).toBe(known.status);
		expect(unknown.headers.get('location')).toBe(known.headers.get('location'));
		expect(known.headers.get('location')).toMatch(/\/verify-request\?/);
	});

	it(`sends at most ${LINK_LIMIT.requests} links to one address in the window, and still answers the same`, async () => {
		const { people } = await makeLab(['reader']);
		const email = people.reader.email;
		const answers = [];
		for (let i = 0; i < 15; i++) answers.push((await request(email)).headers.get('location'));
		expect(new Set(answers).size).toBe(1);
		const tokens = await db.select().from(schema.verificationTokens).where(eq(schema.verificationTokens.identifier, email));
		expect(tokens.length).toBe(LINK_LIMIT.requests);
	});
});

describe('the page after sign-in', () => {
	// Regression: `/signin?next=/%5Chost` sent a signed-in browser to http://host/ (browsers read `/\` as `//`).
	it.each(['/%5Cevil.example', '//evil.example', '/\\evil.example', 'https://evil.example'])('stays on the site for next=%s [trade]', async (next) => {
		const { jar } = await signInAs(lab.people.reader.email);
		const res = await page('GET', `/signin?next=${encodeURIComponent(next).replace(/%25/g, '%')}`, { jar });
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe('/labs');
	});
	it('keeps a same-site destination', async () => {
		const { jar } = await signInAs(lab.people.reader.email);
		const res = await page('GET', `/signin?next=${encodeURIComponent(`/labs/${lab.lab.slug}`)}`, { jar });
		expect(res.headers.get('location')).toBe(`/labs/${lab.lab.slug}`);
	});
});
