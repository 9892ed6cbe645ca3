/**
 * Every route under /api/v1, called with a personal API token of each role in a lab (lead, modeller, reviewer,
 * reader), of a member of another lab, and with no token: the expected status of each, as one table. The requests
 * go through hooks.server.ts (token → locals.user) to the real handlers and the real PostgreSQL.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { db, makeLab, schema, TEST_PASSWORD } from './db';
import { api, body, routeIds, tokenFor } from './request';
import { triangleScheme, triangleWorkbook, upload } from './api-fixtures';
import { stopJobs } from '../../src/lib/server/jobs';

const WHO = ['lead', 'modeller', 'reviewer', 'reader', 'outsider', 'anonymous'] as const;
type Who = (typeof WHO)[number];

interface Ctx {
	lab: string;
	scheme: string;
	uploaded: string;
	audit: string;
	/** an engine job of the lab (a row only: no worker runs in this file, so it stays queued) */
	job: string;
	labId: string;
	userId: string;
	/** Filled by a row's prepare() for one caller. */
	fresh?: string;
}

interface Row {
	route: string;
	method: 'GET' | 'POST';
	path: (c: Ctx) => string;
	body?: (who: Who, c: Ctx) => { json?: unknown; form?: FormData };
	prepare?: (who: Who, c: Ctx) => Promise<string>;
	/** Tells apart two rows of the same route (e.g. another body form). */
	variant?: string;
	expect: Record<Who, number>;
}

const members = (status: number) => ({ lead: status, modeller: status, reviewer: status, reader: status, outsider: 404, anonymous: 401 });
const modellers = (status: number) => ({ lead: status, modeller: status, reviewer: 403, reader: 403, outsider: 404, anonymous: 401 });

let ctx: Ctx;
const tokens = {} as Record<Who, string | null>;
let seq = 0;

async function ok(response: Response, status: number) {
	const payload = await body(response);
	if (response.status !== status) throw new Error(`fixture: expected ${status}, got ${response.status} ${JSON.stringify(payload)}`);
	return payload as Record<string, any>;
}

/** A new draft audit of the scheme, run by the modeller. */
async function draftAudit(c: Ctx): Promise<string> {
	const res = await ok(await api('POST', `/api/v1/labs/${c.lab}/schemes/${c.scheme}/audits`, { token: tokens.modeller, json: {} }), 201);
	return res.audit.id;
}
/** A new engine job row of the lab, waiting (nothing works it here). */
async function queuedJob(c: Ctx): Promise<string> {
	const [job] = await db
		.insert(schema.engineJobs)
		.values({ kind: 'audit', labId: c.labId, schemeId: c.scheme, input: {}, cacheKey: `access-${++seq}`, createdBy: c.userId })
		.returning();
	return job.id;
}
/** A new audit, run by the modeller and submitted for review. */
async function submittedAudit(c: Ctx): Promise<string> {
	const id = await draftAudit(c);
	await ok(await api('POST', `/api/v1/labs/${c.lab}/audits/${id}/submit`, { token: tokens.modeller, json: { note: 'please check' } }), 200);
	return id;
}

const A = (c: Ctx) => `/api/v1/labs/${c.lab}`;
const S = (c: Ctx) => `${A(c)}/schemes/${c.scheme}`;
const AU = (c: Ctx) => `${A(c)}/audits/${c.audit}`;

const ROWS: Row[] = [
	{ route: '/api/v1/labs', method: 'GET', path: () => '/api/v1/labs', expect: { ...members(200), outsider: 200 } },
	{ route: '/api/v1/labs/[lab]', method: 'GET', path: A, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/members', method: 'GET', path: (c) => `${A(c)}/members`, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/schemes', method: 'GET', path: (c) => `${A(c)}/schemes?q=Triangle&sort=name&dir=asc&page=1&pageSize=5`, expect: members(200) },
	{
		route: '/api/v1/labs/[lab]/schemes',
		method: 'POST',
		path: (c) => `${A(c)}/schemes`,
		body: (who) => ({ json: { name: `JSON scheme by ${who} ${++seq}`, scheme: triangleScheme('ignored') } }),
		expect: modellers(201)
	},
	{
		route: '/api/v1/labs/[lab]/schemes',
		method: 'POST',
		path: (c) => `${A(c)}/schemes`,
		body: (who) => ({ form: upload(workbook, 'triangle.xlsx', { name: `Uploaded by ${who} ${++seq}` }) }),
		expect: modellers(201)
	},
	{ route: '/api/v1/labs/[lab]/schemes/[scheme]', method: 'GET', path: S, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/schemes/[scheme]/revisions', method: 'GET', path: (c) => `${S(c)}/revisions`, expect: members(200) },
	{
		route: '/api/v1/labs/[lab]/schemes/[scheme]/revisions',
		method: 'POST',
		path: (c) => `${S(c)}/revisions`,
		body: (who) => ({ json: { scheme: triangleScheme('Triangle', 3), note: `by ${who}` } }),
		expect: modellers(201)
	},
	{ route: '/api/v1/labs/[lab]/schemes/[scheme]/revisions/[n]', method: 'GET', path: (c) => `${S(c)}/revisions/1`, expect: members(200) },
	{
		route: '/api/v1/labs/[lab]/schemes/[scheme]/revisions/[n]/source',
		method: 'GET',
		path: (c) => `${A(c)}/schemes/${c.uploaded}/revisions/1/source`,
		expect: members(200)
	},
	{ route: '/api/v1/labs/[lab]/schemes/[scheme]/compare', method: 'GET', path: (c) => `${S(c)}/compare?from=1&to=2`, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/schemes/[scheme]/audits', method: 'GET', path: (c) => `${S(c)}/audits`, expect: members(200) },
	{
		route: '/api/v1/labs/[lab]/schemes/[scheme]/audits',
		method: 'POST',
		path: (c) => `${S(c)}/audits`,
		body: () => ({ json: { revision: 1, conditions: { forcePN: 1.5 } } }),
		expect: modellers(201)
	},
	{
		route: '/api/v1/labs/[lab]/schemes/[scheme]/preview',
		method: 'POST',
		path: (c) => `${S(c)}/preview`,
		body: () => ({ json: { conditions: { temperatureK: 300 } } }),
		expect: members(200)
	},
	{
		route: '/api/v1/labs/[lab]/schemes/[scheme]/preview',
		method: 'POST',
		variant: 'edited scheme document',
		path: (c) => `${S(c)}/preview`,
		body: () => ({ json: { scheme: triangleScheme('Triangle', 3), conditions: { forcePN: 0.5 } } }),
		expect: members(200)
	},
	{ route: '/api/v1/labs/[lab]/audits/[audit]', method: 'GET', path: AU, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/audits/[audit]/verify', method: 'GET', path: (c) => `${AU(c)}/verify`, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/audits/[audit]/sweep', method: 'GET', path: (c) => `${AU(c)}/sweep?variable=force&from=-5&to=5&points=3`, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/audits/[audit]/trees', method: 'GET', path: (c) => `${AU(c)}/trees?state=E1`, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/audits/[audit]/cycles', method: 'GET', path: (c) => `${AU(c)}/cycles?verdict=all&sort=z&dir=desc&page=1&pageSize=10`, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/audits/[audit]/export/xlsx', method: 'GET', path: (c) => `${AU(c)}/export/xlsx`, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/audits/[audit]/export/pdf', method: 'GET', path: (c) => `${AU(c)}/export/pdf`, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/audits/[audit]/export/json', method: 'GET', path: (c) => `${AU(c)}/export/json`, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/audits/[audit]/export/csv', method: 'GET', path: (c) => `${AU(c)}/export/csv?table=cycles`, expect: members(200) },
	{
		route: '/api/v1/labs/[lab]/audits/[audit]/submit',
		method: 'POST',
		prepare: (_who, c) => draftAudit(c),
		path: (c) => `${A(c)}/audits/${c.fresh}/submit`,
		body: () => ({ json: { note: 'ready for a second pair of eyes' } }),
		expect: modellers(200)
	},
	{
		route: '/api/v1/labs/[lab]/audits/[audit]/sign',
		method: 'POST',
		prepare: (_who, c) => submittedAudit(c),
		path: (c) => `${A(c)}/audits/${c.fresh}/sign`,
		body: () => ({ json: { password: TEST_PASSWORD, comment: 'checked the cycle table', acknowledgeViolation: true } }),
		expect: { lead: 403, modeller: 403, reviewer: 200, reader: 403, outsider: 404, anonymous: 401 }
	},
	{
		route: '/api/v1/labs/[lab]/audits/[audit]/return',
		method: 'POST',
		prepare: (_who, c) => submittedAudit(c),
		path: (c) => `${A(c)}/audits/${c.fresh}/return`,
		body: () => ({ json: { comment: 'step c needs a source for its backward rate' } }),
		expect: { lead: 403, modeller: 403, reviewer: 200, reader: 403, outsider: 404, anonymous: 401 }
	},
	{ route: '/api/v1/labs/[lab]/audits/[audit]/adopt-correction', method: 'POST', path: (c) => `${AU(c)}/adopt-correction`, expect: modellers(201) },
	{ route: '/api/v1/labs/[lab]/reviews', method: 'GET', path: (c) => `${A(c)}/reviews`, expect: members(200) },
	{ route: '/api/v1/labs/[lab]/activity', method: 'GET', path: (c) => `${A(c)}/activity?page=1&pageSize=10`, expect: { lead: 200, modeller: 403, reviewer: 403, reader: 403, outsider: 404, anonymous: 401 } },
	{ route: '/api/v1/labs/[lab]/jobs/[job]', method: 'GET', path: (c) => `${A(c)}/jobs/${c.job}`, expect: members(200) },
	{
		route: '/api/v1/labs/[lab]/jobs/[job]/cancel',
		method: 'POST',
		prepare: (_who, c) => queuedJob(c),
		path: (c) => `${A(c)}/jobs/${c.fresh}/cancel`,
		expect: modellers(200)
	},
	{ route: '/api/v1/template', method: 'GET', path: () => '/api/v1/template', expect: { ...members(200), outsider: 200 } }
];

let workbook: Uint8Array;

beforeAll(async () => {
	const home = await makeLab();
	const other = await makeLab(['lead']);
	for (const role of ['lead', 'modeller', 'reviewer', 'reader'] as const) tokens[role] = await tokenFor(home.people[role].id);
	tokens.outsider = await tokenFor(other.people.lead.id);
	tokens.anonymous = null;
	workbook = await triangleWorkbook();

	const lab = home.lab.slug;
	const created = await ok(await api('POST', `/api/v1/labs/${lab}/schemes`, { token: tokens.modeller, json: { name: 'Triangle', scheme: triangleScheme('Triangle') } }), 201);
	const scheme = created.scheme.id as string;
	await ok(await api('POST', `/api/v1/labs/${lab}/schemes/${scheme}/revisions`, { token: tokens.modeller, json: { scheme: triangleScheme('Triangle', 4), note: 'c backward rate re-measured' } }), 201);
	const uploaded = await ok(await api('POST', `/api/v1/labs/${lab}/schemes`, { token: tokens.modeller, form: upload(workbook, 'triangle.xlsx', { name: 'Triangle from a sheet' }) }), 201);
	ctx = { lab, scheme, uploaded: uploaded.scheme.id, audit: '', job: '', labId: home.lab.id, userId: home.people.modeller.id };
	ctx.audit = await draftAudit(ctx);
	ctx.job = await queuedJob(ctx);
});

afterAll(async () => {
	await stopJobs();
});

describe('the access table', () => {
	it('has a row for every +server.ts route under /api/v1', () => {
		const covered = new Set(ROWS.map((r) => r.route));
		const missing = routeIds().filter((id) => id.startsWith('/api/v1') && !covered.has(id));
		expect(missing).toEqual([]);
	});
});

for (const row of ROWS) {
	describe(`${row.method} ${row.route}${row.variant ? ` (${row.variant})` : row.body?.('lead', {} as Ctx).form ? ' (rate-table upload)' : ''}`, () => {
		for (const who of WHO) {
			it(`answers ${row.expect[who]} to ${who === 'outsider' ? 'a lead of another lab' : who === 'anonymous' ? 'a request without a token' : `the ${who}`}`, async () => {
				const c = { ...ctx };
				if (row.prepare) c.fresh = await row.prepare(who, c);
				const response = await api(row.method, row.path(c), { token: tokens[who], ...(row.body?.(who, c) ?? {}) });
				const text = await response.clone().text();
				expect(response.status, text.slice(0, 300)).toBe(row.expect[who]);
				if (response.status >= 400) {
					const payload = JSON.parse(text);
					expect(Object.keys(payload)).toEqual(['error']);
					expect(typeof payload.error.code).toBe('string');
					expect(payload.error.message.length).toBeGreaterThan(10);
					expect('details' in payload.error).toBe(true);
				}
			});
		}
	});
}
