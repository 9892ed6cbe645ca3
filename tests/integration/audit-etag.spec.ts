/**
 * Stored audits are served as immutable: a strong ETag built from the audit's SHA-256 and its review state
 * (RFC 9110 §8.8.3), and 304 Not Modified on If-None-Match (§13.1.2) [pub] — from the JSON API and for the audit
 * page's data. The tag moves when the review state moves, depends on the reader for the page, and never answers
 * for a lab the reader is not in.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { db, schema, makeLab } from './db';
import { getAudit, getAuditSummary } from '../../src/lib/server/audits';
import { api, body, tokenFor } from './request';
import { triangleScheme } from './api-fixtures';
import { stopJobs } from '../../src/lib/server/jobs';
import { submitForReview } from '../../src/lib/server/reviews';
import type { LabAccess } from '../../src/lib/server/access';
import { load } from '../../src/routes/(app)/labs/[lab]/audits/[audit]/+page.server';

type Json = Record<string, any>;
let home: Awaited<ReturnType<typeof makeLab>>;
let other: Awaited<ReturnType<typeof makeLab>>;
const token: Record<string, string> = {};
let auditId: string;
let sha256: string;
let path: string;

const get = (as: string, ifNoneMatch?: string) =>
	api('GET', path, { token: as, ...(ifNoneMatch ? { headers: { 'if-none-match': ifNoneMatch } } : {}) });

/** The audit page's load as SvelteKit calls it, with the headers it sets. */
async function pageLoad(role: 'modeller' | 'reader', opts: { isDataRequest: boolean; ifNoneMatch?: string }) {
	const u = home.people[role];
	const headers: Record<string, string> = {};
	const data = await load({
		locals: { user: { id: u.id, email: u.email, name: u.name }, via: 'session' },
		params: { lab: home.lab.slug, audit: auditId },
		url: new URL(`http://127.0.0.1/labs/${home.lab.slug}/audits/${auditId}`),
		request: new Request('http://127.0.0.1/', { headers: opts.ifNoneMatch ? { 'if-none-match': opts.ifNoneMatch } : {} }),
		isDataRequest: opts.isDataRequest,
		setHeaders: (h: Record<string, string>) => Object.assign(headers, h)
	} as never);
	return { data: data as Json, headers };
}

beforeAll(async () => {
	home = await makeLab(['modeller', 'reviewer', 'reader']);
	other = await makeLab(['lead']);
	token.modeller = await tokenFor(home.people.modeller.id);
	token.reader = await tokenFor(home.people.reader.id);
	token.outsider = await tokenFor(other.people.lead.id);
	const created = await body<Json>(await api('POST', `/api/v1/labs/${home.lab.slug}/schemes`, { token: token.modeller, json: { scheme: triangleScheme('Kestrel triangle (etag)') } }));
	const audit = (await body<Json>(await api('POST', `/api/v1/labs/${home.lab.slug}/schemes/${created.scheme.id}/audits`, { token: token.modeller }))).audit;
	auditId = audit.id;
	sha256 = audit.sha256;
	path = `/api/v1/labs/${home.lab.slug}/audits/${auditId}`;
});
afterAll(async () => {
	await stopJobs();
});

describe('stored audit: ETag and 304', () => {
	it('answers with a strong ETag from the audit hash and 304 on If-None-Match, without a body [pub]', async () => {
		const first = await get(token.reader);
		expect(first.status).toBe(200);
		const etag = first.headers.get('etag')!;
		expect(etag).toBe(`"${sha256}-draft-0"`);
		expect(first.headers.get('cache-control')).toBe('private, no-cache');
		const again = await get(token.reader, etag);
		expect(again.status).toBe(304);
		expect(again.headers.get('etag')).toBe(etag);
		expect(await again.text()).toBe('');
		// a weak comparison and a list of tags both match (If-None-Match uses the weak comparison, RFC 9110 §13.1.2)
		expect((await get(token.reader, `W/${etag}`)).status).toBe(304);
		expect((await get(token.reader, `"other", ${etag}`)).status).toBe(304);
		expect((await get(token.reader, '"other"')).status).toBe(200);
	});

	it('moves the tag when the review state moves, so a stale copy is sent again in full', async () => {
		const before = (await get(token.reader)).headers.get('etag')!;
		const m = home.people.modeller;
		const access: LabAccess = { lab: home.lab, role: 'modeller', user: { id: m.id, email: m.email, name: m.name } };
		await submitForReview(access, auditId, 'please check');
		const stale = await get(token.reader, before);
		expect(stale.status).toBe(200);
		expect(stale.headers.get('etag')).toBe(`"${sha256}-submitted-1"`);
		expect((await body<Json>(stale)).audit.status).toBe('submitted');
	});

	it('answers 404, not 304, to a reader outside the lab who sends the tag', async () => {
		const etag = (await get(token.reader)).headers.get('etag')!;
		expect((await get(token.outsider, etag)).status).toBe(404);
	});

	it('tags the audit page for its reader and skips the reading on a matching data request', async () => {
		const full = await pageLoad('modeller', { isDataRequest: true });
		const etag = full.headers.etag;
		expect(etag).toMatch(new RegExp(`^"${sha256}-submitted-1-[A-Za-z0-9_-]{10}"$`));
		expect(full.data.audit.id).toBe(auditId);
		// another reader, another role: another tag (what the page offers differs)
		expect((await pageLoad('reader', { isDataRequest: true })).headers.etag).not.toBe(etag);
		const revalidated = await pageLoad('modeller', { isDataRequest: true, ifNoneMatch: etag });
		expect(revalidated.headers.etag).toBe(etag);
		expect(revalidated.data).toEqual({});
		// a page (HTML) request is always rendered in full; SvelteKit answers 304 from the tag
		expect((await pageLoad('modeller', { isDataRequest: false, ifNoneMatch: etag })).data.audit.id).toBe(auditId);
	});

	it('stores a summary beside the audit: its results without the per-cycle lists, read by the page [der]', async () => {
		const [row] = await db.select().from(schema.auditSummaries).where(eq(schema.auditSummaries.auditId, auditId));
		const full = await getAudit(home.lab.id, auditId);
		const { cycles, cycleAffinitiesKT, ...rest } = full.results;
		expect(row.cycleCount).toBe(cycles.length);
		expect(row.summary).toEqual(rest);
		expect(cycleAffinitiesKT).toHaveLength(cycles.length);
		expect((await getAuditSummary(home.lab.id, auditId)).results).toEqual(rest);
	});
});
