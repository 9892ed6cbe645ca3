/**
 * Every page, every form action and every non-API `+server.ts` route, called with a signed-in browser (a real
 * password sign-in, the session cookie through hooks.server.ts) of each role in a lab (lead, modeller, reviewer,
 * reader), of another lab's lead, and anonymously: the expected status of each, as one table. The routes are
 * enumerated from src/routes, so a page, endpoint or action added without a row here fails the last tests.
 * (The JSON API has its own table in api-access.spec.ts.)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeLab } from './db';
import { api, body, tokenFor } from './request';
import { actionNames, CookieJar, page, pageRouteIds, signInAs } from './pages';
import { triangleScheme, triangleWorkbook, upload } from './api-fixtures';
import { stopJobs } from '../../src/lib/server/jobs';
import { TEST_PASSWORD } from './db';

const WHO = ['lead', 'modeller', 'reviewer', 'reader', 'outsider', 'anonymous'] as const;
type Who = (typeof WHO)[number];

interface Ctx {
	lab: string;
	scheme: string;
	audit: string;
	/** A scheme made from an uploaded rate table (its revision 1 keeps the file). */
	uploaded: string;
	fresh?: string;
}

interface Row {
	route: string;
	method: 'GET' | 'POST';
	/** The action name for POST rows ('default' for an unnamed one). */
	action?: string;
	path: (c: Ctx) => string;
	form?: (who: Who, c: Ctx) => Record<string, string> | FormData;
	/** Runs before the call for each person (e.g. a fresh audit to submit); its result is ctx.fresh. */
	prepare?: (who: Who, c: Ctx) => Promise<string>;
	/** A browser of its own, signed in for this call only (sign-out would end the shared one). */
	ownBrowser?: boolean;
	expect: Record<Who, number>;
}

const SIGN_IN = 303;
const all = (status: number): Record<Who, number> => ({ lead: status, modeller: status, reviewer: status, reader: status, outsider: status, anonymous: status });
const signedIn = (status: number): Record<Who, number> => ({ ...all(status), anonymous: SIGN_IN });
const members = (status: number): Record<Who, number> => ({ ...all(status), outsider: 404, anonymous: SIGN_IN });
const modellers = (status: number): Record<Who, number> => ({ ...members(status), reviewer: 403, reader: 403 });
const leads = (status: number): Record<Who, number> => ({ ...members(403), lead: status });
/** Actions answer 401 rather than sending the browser to sign in (requireUser). */
const anon401 = (e: Record<Who, number>): Record<Who, number> => ({ ...e, anonymous: 401 });

let ctx: Ctx;
const jars = {} as Record<Who, CookieJar | undefined>;
const people = {} as Record<Who, { id: string; email: string } | undefined>;
let modellerToken: string;

async function draftAudit(c: Ctx): Promise<string> {
	const res = await api('POST', `/api/v1/labs/${c.lab}/schemes/${c.scheme}/audits`, { token: modellerToken, json: {} });
	return (await body<any>(res)).audit.id;
}
async function submittedAudit(c: Ctx): Promise<string> {
	const id = await draftAudit(c);
	const res = await api('POST', `/api/v1/labs/${c.lab}/audits/${id}/submit`, { token: modellerToken, json: { note: 'please check' } });
	if (res.status !== 200) throw new Error(`fixture: submit answered ${res.status}`);
	return id;
}

const L = (c: Ctx) => `/labs/${c.lab}`;
const S = (c: Ctx) => `${L(c)}/schemes/${c.scheme}`;
const AU = (c: Ctx, id = c.audit) => `${L(c)}/audits/${id}`;
const NO_TOKEN = 'no-such-invitation-token-0000000000';
const NO_JOB = '00000000-0000-4000-8000-000000000000';

const ROWS: Row[] = [
	// Public pages
	{ route: '/', method: 'GET', path: () => '/', expect: all(200) },
	{ route: '/signin', method: 'GET', path: () => '/signin', expect: { ...all(303), anonymous: 200 } },
	{ route: '/signin/check-mail', method: 'GET', path: () => '/signin/check-mail', expect: all(200) },
	{ route: '/signout', method: 'GET', path: () => '/signout', expect: all(200) },
	{ route: '/signing-key', method: 'GET', path: () => '/signing-key', expect: all(200) },
	{ route: '/invite/[token]', method: 'GET', path: () => `/invite/${NO_TOKEN}`, expect: all(200) },
	// A wrong password: the same refusal whoever asks (the pause is per address and far away).
	{ route: '/signin', method: 'POST', action: 'default', path: () => '/signin', form: (who) => ({ providerId: 'password', email: `${who}@nowhere.example`, password: 'not-it-at-all' }), expect: all(400) },
	{ route: '/signout', method: 'POST', action: 'default', path: () => '/signout', ownBrowser: true, expect: all(302) },
	{ route: '/invite/[token]', method: 'POST', action: 'default', path: () => `/invite/${NO_TOKEN}`, form: () => ({ name: 'Nobody', password: 'long-enough-password' }), expect: all(404) },

	// The signed-in shell
	{ route: '/(app)/account', method: 'GET', path: () => '/account', expect: signedIn(200) },
	{ route: '/(app)/api-docs', method: 'GET', path: () => '/api-docs', expect: signedIn(200) },
	{ route: '/(app)/labs', method: 'GET', path: () => '/labs', expect: signedIn(200) },
	{ route: '/(app)/mail', method: 'GET', path: () => '/mail', expect: signedIn(200) },
	{ route: '/(app)/account', method: 'POST', action: 'createToken', path: () => '/account?/createToken', form: (who) => ({ name: `matrix ${who}`, lifetime: '30' }), expect: signedIn(200) },
	{ route: '/(app)/account', method: 'POST', action: 'revokeToken', path: () => '/account?/revokeToken', form: () => ({ id: '00000000-0000-4000-8000-000000000000' }), expect: signedIn(404) },
	// Two different new passwords: refused before any change, so the row has no lasting effect.
	{ route: '/(app)/account', method: 'POST', action: 'changePassword', path: () => '/account?/changePassword', form: () => ({ current: TEST_PASSWORD, next: 'new-password-one', confirm: 'new-password-two' }), expect: signedIn(400) },

	// A lab
	{ route: '/(app)/labs/[lab]', method: 'GET', path: L, expect: members(200) },
	{ route: '/(app)/labs/[lab]/activity', method: 'GET', path: (c) => `${L(c)}/activity`, expect: leads(200) },
	{ route: '/(app)/labs/[lab]/mail', method: 'GET', path: (c) => `${L(c)}/mail`, expect: members(308) },
	{ route: '/(app)/labs/[lab]/members', method: 'GET', path: (c) => `${L(c)}/members`, expect: members(200) },
	{ route: '/(app)/labs/[lab]/reviews', method: 'GET', path: (c) => `${L(c)}/reviews`, expect: members(200) },
	{ route: '/(app)/labs/[lab]/schemes/new', method: 'GET', path: (c) => `${L(c)}/schemes/new`, expect: modellers(200) },
	{ route: '/(app)/labs/[lab]/schemes/template', method: 'GET', path: (c) => `${L(c)}/schemes/template`, expect: members(200) },
	{ route: '/(app)/labs/[lab]/schemes/[scheme]', method: 'GET', path: S, expect: members(200) },
	{ route: '/(app)/labs/[lab]/schemes/[scheme]/revisions', method: 'GET', path: (c) => `${S(c)}/revisions`, expect: members(200) },
	{ route: '/(app)/labs/[lab]/schemes/[scheme]/revisions/[n]/source', method: 'GET', path: (c) => `${L(c)}/schemes/${c.uploaded}/revisions/1/source`, expect: members(200) },
	{ route: '/(app)/labs/[lab]/audits/[audit]', method: 'GET', path: (c) => AU(c), expect: members(200) },
	// A job id that does not exist: members learn only that (404); the cancel action checks the role first.
	{ route: '/(app)/labs/[lab]/jobs/[job]', method: 'GET', path: (c) => `${L(c)}/jobs/${NO_JOB}`, expect: members(404) },
	{ route: '/(app)/labs/[lab]/jobs/[job]', method: 'POST', action: 'cancel', path: (c) => `${L(c)}/jobs/${NO_JOB}?/cancel`, expect: anon401(modellers(404)) },

	// Members: invalid bodies, so only the role check decides (lead 400, others refused), nothing changes.
	{ route: '/(app)/labs/[lab]/members', method: 'POST', action: 'invite', path: (c) => `${L(c)}/members?/invite`, form: () => ({ email: 'not-an-address', role: 'reader' }), expect: anon401(leads(400)) },
	{ route: '/(app)/labs/[lab]/members', method: 'POST', action: 'role', path: (c) => `${L(c)}/members?/role`, form: () => ({ userId: 'nobody', role: 'emperor' }), expect: anon401(leads(400)) },
	{ route: '/(app)/labs/[lab]/members', method: 'POST', action: 'remove', path: (c) => `${L(c)}/members?/remove`, form: () => ({ userId: 'nobody' }), expect: anon401(leads(404)) },

	// Schemes
	{ route: '/(app)/labs/[lab]/schemes/new', method: 'POST', action: 'upload', path: (c) => `${L(c)}/schemes/new?/upload`, form: (who) => sheetForm(who), expect: anon401(modellers(303)) },
	{ route: '/(app)/labs/[lab]/schemes/new', method: 'POST', action: 'empty', path: (c) => `${L(c)}/schemes/new?/empty`, form: (who) => ({ name: `Matrix draft ${who} ${++seq}`, scheme: JSON.stringify(triangleScheme('draft')) }), expect: anon401(modellers(303)) },
	{ route: '/(app)/labs/[lab]/schemes/[scheme]', method: 'POST', action: 'run', path: (c) => `${S(c)}?/run`, form: () => ({ temperatureK: '298.15', forcePN: '0' }), expect: anon401(modellers(303)) },
	{ route: '/(app)/labs/[lab]/schemes/[scheme]', method: 'POST', action: 'save', path: (c) => `${S(c)}?/save`, form: (who) => ({ note: `saved by ${who}`, scheme: JSON.stringify(triangleScheme('Matrix scheme', 3 + ++seq)) }), expect: anon401(modellers(303)) },

	// Audits: each person acts on a fresh audit of the right status.
	{ route: '/(app)/labs/[lab]/audits/[audit]', method: 'POST', action: 'submit', prepare: (_w, c) => draftAudit(c), path: (c) => `${AU(c, c.fresh)}?/submit`, form: () => ({ note: 'matrix' }), expect: anon401(modellers(200)) },
	{ route: '/(app)/labs/[lab]/audits/[audit]', method: 'POST', action: 'sign', prepare: (_w, c) => submittedAudit(c), path: (c) => `${AU(c, c.fresh)}?/sign`, form: () => ({ password: TEST_PASSWORD, comment: 'checked: the violation is the point of this test scheme', acknowledgeViolation: 'yes' }), expect: anon401({ ...members(403), reviewer: 200 }) },
	{ route: '/(app)/labs/[lab]/audits/[audit]', method: 'POST', action: 'return', prepare: (_w, c) => submittedAudit(c), path: (c) => `${AU(c, c.fresh)}?/return`, form: () => ({ comment: 'please fix' }), expect: anon401({ ...members(403), reviewer: 200 }) },
	{ route: '/(app)/labs/[lab]/audits/[audit]', method: 'POST', action: 'adopt', path: (c) => `${AU(c)}?/adopt`, expect: anon401(modellers(303)) },
	{ route: '/(app)/labs/[lab]/audits/[audit]', method: 'POST', action: 'verify', path: (c) => `${AU(c)}?/verify`, expect: anon401(members(200)) }
];

let workbook: Uint8Array;
let seq = 0;
/** The page's upload form names the file field "sheet" (the API's is "file"). */
function sheetForm(who: Who): FormData {
	const form = new FormData();
	form.set('sheet', new File([workbook as BlobPart], 'triangle.xlsx', { type: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet' }));
	form.set('name', `Matrix upload ${who} ${++seq}`);
	return form;
}

beforeAll(async () => {
	workbook = await triangleWorkbook();
	const { lab, people: inLab } = await makeLab(['lead', 'modeller', 'reviewer', 'reader']);
	const other = await makeLab(['lead']);
	modellerToken = await tokenFor(inLab.modeller.id);
	const created = await api('POST', `/api/v1/labs/${lab.slug}/schemes`, { token: modellerToken, json: { name: 'Matrix triangle', scheme: triangleScheme('Matrix triangle') } });
	const scheme = (await body<any>(created)).scheme.id;
	const up = await api('POST', `/api/v1/labs/${lab.slug}/schemes`, { token: modellerToken, form: upload(workbook, 'triangle.xlsx', { name: 'Matrix uploaded' }) });
	ctx = { lab: lab.slug, scheme, audit: '', uploaded: (await body<any>(up)).scheme.id };
	ctx.audit = await draftAudit(ctx);
	for (const role of ['lead', 'modeller', 'reviewer', 'reader'] as const) people[role] = inLab[role];
	people.outsider = other.people.lead;
	for (const who of WHO) if (people[who]) jars[who] = (await signInAs(people[who]!.email)).jar;
});
afterAll(async () => {
	await stopJobs();
});

describe.each(ROWS.map((row) => [`${row.method} ${row.route}${row.action ? ` ?/${row.action}` : ''}`, row] as const))('%s', (_name, row) => {
	it.each(WHO.map((who) => [who, row.expect[who]] as const))('answers %s with %i', async (who, status) => {
		const c = { ...ctx };
		if (row.prepare) c.fresh = await row.prepare(who, c);
		const jar = row.ownBrowser && people[who] ? (await signInAs(people[who]!.email)).jar : jars[who];
		const res = await page(row.method, row.path(c), { jar, form: row.form?.(who, c) });
		if (res.status !== status) throw new Error(`${who}: expected ${status}, got ${res.status} ${(await res.text()).slice(0, 300)}`);
		expect(res.status).toBe(status);
		// A page of lab data is never kept by a shared cache, nor reused without asking the server (which checks the
		// session): no-store, or private revalidation for pages that answer 304 by ETag.
		if (row.method === 'GET' && who !== 'anonymous' && status === 200) expect(res.headers.get('cache-control')).toMatch(/no-store|private, no-cache/);
	});
});

describe('the table covers every route', () => {
	it('has a GET row for every page and every non-API +server.ts route', () => {
		const { pages, endpoints } = pageRouteIds();
		const covered = new Set(ROWS.filter((r) => r.method === 'GET').map((r) => r.route));
		expect([...pages, ...endpoints].filter((id) => !covered.has(id))).toEqual([]);
	});
	it('has a row for every form action', async () => {
		const { pages } = pageRouteIds();
		const missing: string[] = [];
		for (const id of pages) for (const name of await actionNames(id)) if (!ROWS.some((r) => r.method === 'POST' && r.route === id && r.action === name)) missing.push(`${id} ?/${name}`);
		expect(missing).toEqual([]);
	});
});
