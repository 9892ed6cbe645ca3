/**
 * The API's behaviour beyond who may call what: token revocation, located errors for bad schemes and bad sheets
 * with nothing half-saved, the kept source file, exports, and review and sign-off with the guarantees PostgreSQL
 * gives a signed audit.
 */
import { createHash } from 'node:crypto';
import ExcelJS from 'exceljs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, count, eq, sql } from 'drizzle-orm';
import { db, schema, makeLab, TEST_PASSWORD } from './db';
import { api, body, tokenFor } from './request';
import { triangleScheme, triangleWorkbook, upload } from './api-fixtures';
import { revokeApiToken, listApiTokens } from '../../src/lib/server/api-tokens';
import pg from 'pg';
import { stopJobs } from '../../src/lib/server/jobs';

type Json = Record<string, any>;
let home: Awaited<ReturnType<typeof makeLab>>;
const token: Record<string, string> = {};
let lab: string;

async function schemeCount(): Promise<number> {
	const [{ n }] = await db.select({ n: count() }).from(schema.schemes).where(eq(schema.schemes.labId, home.lab.id));
	return n;
}

async function createTriangle(name: string): Promise<string> {
	const res = await api('POST', `/api/v1/labs/${lab}/schemes`, { token: token.modeller, json: { name, scheme: triangleScheme(name) } });
	expect(res.status).toBe(201);
	return (await body<Json>(res)).scheme.id;
}

async function runAudit(schemeId: string, as = token.modeller): Promise<Json> {
	const res = await api('POST', `/api/v1/labs/${lab}/schemes/${schemeId}/audits`, { token: as });
	expect(res.status).toBe(201);
	return (await body<Json>(res)).audit;
}

async function submit(auditId: string, as = token.modeller): Promise<Response> {
	return api('POST', `/api/v1/labs/${lab}/audits/${auditId}/submit`, { token: as, json: { note: 'please review' } });
}

async function sign(auditId: string, password = TEST_PASSWORD, as = token.reviewer): Promise<Response> {
	return api('POST', `/api/v1/labs/${lab}/audits/${auditId}/sign`, { token: as, json: { password, comment: 'cycle table checked', acknowledgeViolation: true } });
}

beforeAll(async () => {
	home = await makeLab(['lead', 'modeller', 'reviewer', 'reader']);
	lab = home.lab.slug;
	for (const role of ['lead', 'modeller', 'reviewer', 'reader']) token[role] = await tokenFor(home.people[role].id);
});

afterAll(async () => {
	await stopJobs();
});

describe('personal API tokens', () => {
	it('stops a revoked token at once (401), and logs creation and revocation', async () => {
		const fresh = await tokenFor(home.people.reader.id, 'to be revoked');
		expect((await api('GET', `/api/v1/labs/${lab}`, { token: fresh })).status).toBe(200);
		const [row] = (await listApiTokens(home.people.reader.id)).filter((t) => t.name === 'to be revoked');
		expect(row.lastUsedAt).not.toBeNull();
		expect(fresh.startsWith(row.prefix)).toBe(true);
		expect(await revokeApiToken(home.people.reader.id, row.id)).toBe(true);
		const res = await api('GET', `/api/v1/labs/${lab}`, { token: fresh });
		expect(res.status).toBe(401);
		expect((await body<Json>(res)).error.code).toBe('unauthenticated');
		// Revoking twice, or someone else's token, does nothing.
		expect(await revokeApiToken(home.people.reader.id, row.id)).toBe(false);
		expect(await revokeApiToken(home.people.lead.id, (await listApiTokens(home.people.reader.id))[0].id)).toBe(false);
		const kinds = await db
			.select({ kind: schema.activityLog.kind })
			.from(schema.activityLog)
			.where(and(eq(schema.activityLog.labId, home.lab.id), eq(schema.activityLog.actorId, home.people.reader.id)));
		expect(kinds.map((k) => k.kind)).toEqual(expect.arrayContaining(['token-created', 'token-revoked']));
	});

	it('stores only a hash of the token', async () => {
		const fresh = await tokenFor(home.people.reader.id, 'hash check');
		const rows = await db.select().from(schema.apiTokens).where(eq(schema.apiTokens.userId, home.people.reader.id));
		expect(rows.some((r) => r.tokenHash === createHash('sha256').update(fresh).digest('hex'))).toBe(true);
		expect(JSON.stringify(rows)).not.toContain(fresh);
	});

	it('answers 401 to a token that was never issued', async () => {
		expect((await api('GET', '/api/v1/labs', { token: 'esc_' + 'x'.repeat(32) })).status).toBe(401);
	});
});

describe('schemes from JSON and from sheets', () => {
	it('refuses an invalid scheme with 422 and the JSON path of each problem, saving nothing', async () => {
		const before = await schemeCount();
		const bad = triangleScheme('Broken') as Json;
		bad.steps[1].kForward = -3;
		bad.steps[2].to = 'E9';
		const res = await api('POST', `/api/v1/labs/${lab}/schemes`, { token: token.modeller, json: { scheme: bad } });
		expect(res.status).toBe(422);
		const { error } = await body<Json>(res);
		expect(error.code).toBe('invalid_scheme');
		expect(error.details.map((d: Json) => d.path)).toEqual(expect.arrayContaining(['steps[1].kForward', 'steps[2].to']));
		expect(error.details.find((d: Json) => d.path === 'steps[2].to').message).toContain('E9');
		expect(await schemeCount()).toBe(before);
	});

	it('answers 400 with the error format to a body that is not JSON or misses the scheme', async () => {
		const notJson = await api('POST', `/api/v1/labs/${lab}/schemes`, { token: token.modeller, raw: { body: '{"scheme": ', type: 'application/json' } });
		expect(notJson.status).toBe(400);
		expect((await body<Json>(notJson)).error.code).toBe('invalid');
		const missing = await api('POST', `/api/v1/labs/${lab}/schemes`, { token: token.modeller, json: { name: 'No scheme' } });
		expect(missing.status).toBe(400);
		expect((await body<Json>(missing)).error.details).toEqual([expect.objectContaining({ path: 'scheme' })]);
	});

	it('refuses a sheet with an error with 422 and its sheet, row and column, saving nothing', async () => {
		const before = await schemeCount();
		const res = await api('POST', `/api/v1/labs/${lab}/schemes`, { token: token.modeller, form: upload(await triangleWorkbook('two'), 'typo.xlsx') });
		expect(res.status).toBe(422);
		const { error } = await body<Json>(res);
		expect(error.code).toBe('invalid_sheet');
		// The template's Steps sheet: header on row 1, steps a, b, c on rows 2–4; k backward is column E.
		expect(error.details).toEqual([expect.objectContaining({ sheet: 'Steps', row: 4, column: 'E' })]);
		expect(error.details[0].message).toContain('"two"');
		expect(await schemeCount()).toBe(before);
	});

	it('keeps the uploaded file with its revision and gives it back byte for byte', async () => {
		const bytes = await triangleWorkbook();
		const res = await api('POST', `/api/v1/labs/${lab}/schemes`, { token: token.lead, form: upload(bytes, 'Triangle µ-rates.xlsx') });
		expect(res.status).toBe(201);
		const created = await body<Json>(res);
		expect(created.revision.number).toBe(1);
		const revisions = await body<Json>(await api('GET', `/api/v1/labs/${lab}/schemes/${created.scheme.id}/revisions`, { token: token.reader }));
		expect(revisions.revisions[0]).toMatchObject({ number: 1, sourceFileName: 'Triangle µ-rates.xlsx', note: 'Uploaded from Triangle µ-rates.xlsx' });
		const source = await api('GET', `/api/v1/labs/${lab}/schemes/${created.scheme.id}/revisions/1/source`, { token: token.reader });
		expect(source.status).toBe(200);
		expect(source.headers.get('content-type')).toBe('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet');
		expect(source.headers.get('content-disposition')).toContain(`filename*=UTF-8''${encodeURIComponent('Triangle µ-rates.xlsx')}`);
		const back = new Uint8Array(await source.arrayBuffer());
		expect(Buffer.from(back).equals(Buffer.from(bytes))).toBe(true);
		expect(source.headers.get('x-content-sha256')).toBe(createHash('sha256').update(bytes).digest('hex'));
		// A scheme typed in as JSON has no source file.
		const typed = await createTriangle('Typed triangle');
		expect((await api('GET', `/api/v1/labs/${lab}/schemes/${typed}/revisions/1/source`, { token: token.reader })).status).toBe(404);
	});

	it('numbers revisions and compares two of them', async () => {
		const id = await createTriangle('Revised triangle');
		const saved = await api('POST', `/api/v1/labs/${lab}/schemes/${id}/revisions`, { token: token.modeller, json: { scheme: triangleScheme('Revised triangle', 7), note: 'c re-measured' } });
		expect(saved.status).toBe(201);
		expect((await body<Json>(saved)).revision.number).toBe(2);
		const list = await body<Json>(await api('GET', `/api/v1/labs/${lab}/schemes/${id}/revisions`, { token: token.reader }));
		expect(list.revisions.map((r: Json) => r.number)).toEqual([2, 1]);
		const compare = await body<Json>(await api('GET', `/api/v1/labs/${lab}/schemes/${id}/compare?from=1&to=2`, { token: token.reader }));
		expect(compare.diff.steps).toEqual([{ id: 'c', kind: 'changed', changes: [{ field: 'kBackward', before: 2, after: 7 }] }]);
		expect((await api('GET', `/api/v1/labs/${lab}/schemes/${id}/revisions/3`, { token: token.reader })).status).toBe(404);
		expect((await api('GET', `/api/v1/labs/${lab}/schemes/${id}/revisions/two`, { token: token.reader })).status).toBe(404);
		expect((await api('GET', `/api/v1/labs/${lab}/schemes/not-a-uuid`, { token: token.reader })).status).toBe(404);
	});

	it('lists, searches and pages schemes', async () => {
		const tag = `Paged ${Date.now()}`;
		for (const n of [1, 2, 3]) await createTriangle(`${tag} ${n}`);
		const page = await body<Json>(await api('GET', `/api/v1/labs/${lab}/schemes?q=${encodeURIComponent(tag)}&sort=name&dir=desc&pageSize=2&page=1`, { token: token.reader }));
		expect(page.total).toBe(3);
		expect(page.pages).toBe(2);
		expect(page.schemes.map((s: Json) => s.name)).toEqual([`${tag} 3`, `${tag} 2`]);
		expect((await api('GET', `/api/v1/labs/${lab}/schemes?sort=colour`, { token: token.reader })).status).toBe(400);
	});
});

describe('members', () => {
	it('shows open invitations to the lab lead only', async () => {
		await db.insert(schema.invitations).values({
			labId: home.lab.id,
			email: `invitee-${home.tag}@lab.example`,
			role: 'reader',
			tokenHash: createHash('sha256').update(`invite-${home.tag}`).digest('hex'),
			invitedBy: home.people.lead.id,
			expiresAt: new Date(Date.now() + 86400_000)
		});
		const lead = await body<Json>(await api('GET', `/api/v1/labs/${lab}/members`, { token: token.lead }));
		expect(lead.members).toHaveLength(4);
		expect(lead.invitations.map((i: Json) => i.email)).toContain(`invitee-${home.tag}@lab.example`);
		const reader = await body<Json>(await api('GET', `/api/v1/labs/${lab}/members`, { token: token.reader }));
		expect(reader.members).toHaveLength(4);
		expect(reader.invitations).toBeUndefined();
	});
});

describe('audits, exports and sign-off', () => {
	let schemeId: string;
	beforeAll(async () => {
		schemeId = await createTriangle('Audited triangle');
	});

	it('stores an audit whose hash /verify recomputes', async () => {
		const audit = await runAudit(schemeId);
		expect(audit.sha256).toMatch(/^[0-9a-f]{64}$/);
		const stored = await body<Json>(await api('GET', `/api/v1/labs/${lab}/audits/${audit.id}`, { token: token.reader }));
		expect(stored.audit.inputs.steps.map((s: Json) => s.id)).toEqual(['a', 'b', 'c']);
		expect(stored.audit.status).toBe('draft');
		expect(stored.audit.signature).toBeNull();
		const verify = await body<Json>(await api('GET', `/api/v1/labs/${lab}/audits/${audit.id}/verify`, { token: token.reader }));
		expect(verify).toMatchObject({ matches: true, stored: audit.sha256, recomputed: audit.sha256, signed: null });
		const conditioned = await api('POST', `/api/v1/labs/${lab}/schemes/${schemeId}/audits`, { token: token.modeller, json: { conditions: { temperatureK: 900 } } });
		expect(conditioned.status).toBe(400);
		expect((await body<Json>(conditioned)).error.details[0].path).toBe('conditions.temperatureK');
	});

	it('exports the workbook, one CSV table and the JSON document, named after the scheme and revision', async () => {
		const audit = await runAudit(schemeId);
		const base = `/api/v1/labs/${lab}/audits/${audit.id}/export`;
		const xlsx = await api('GET', `${base}/xlsx`, { token: token.reader });
		expect(xlsx.status).toBe(200);
		expect(xlsx.headers.get('content-type')).toBe('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet');
		expect(xlsx.headers.get('content-disposition')).toContain('filename="Audited triangle-r1-audit.xlsx"');
		const wb = new ExcelJS.Workbook();
		await wb.xlsx.load(Buffer.from(await xlsx.arrayBuffer()) as unknown as ExcelJS.Buffer);
		expect(wb.worksheets.map((w) => w.name)).toContain('Cycles');
		const csv = await api('GET', `${base}/csv?table=steps`, { token: token.reader });
		expect(csv.headers.get('content-type')).toBe('text/csv; charset=utf-8');
		expect(csv.headers.get('content-disposition')).toContain('Audited triangle-r1-steps.csv');
		const lines = (await csv.text()).replace(/^\ufeff/, '').trim().split('\r\n');
		expect(lines).toHaveLength(4); // header + steps a, b, c
		expect((await api('GET', `${base}/csv?table=everything`, { token: token.reader })).status).toBe(400);
		const pdf = await api('GET', `${base}/pdf`, { token: token.reader });
		expect(pdf.headers.get('content-type')).toBe('application/pdf');
		expect(new TextDecoder().decode(new Uint8Array(await pdf.arrayBuffer()).slice(0, 5))).toBe('%PDF-');
		const doc = await body<Json>(await api('GET', `${base}/json`, { token: token.reader }));
		expect(doc.provenance.auditSha256).toBe(audit.sha256);
		expect(doc.verification.matches).toBe(true);
	});

	it('queues a mail to the reviewers on submission and refuses a second submission', async () => {
		const audit = await runAudit(schemeId);
		const res = await submit(audit.id);
		expect(res.status).toBe(200);
		expect(await body<Json>(res)).toEqual({ status: 'submitted', notified: 1 });
		const jobs = await db.execute<{ data: Json }>(sql`select data from pgboss.job where name = 'mail' and data->>'subject' like 'Review requested: Audited triangle%'`);
		expect(jobs.rows.some((j) => JSON.stringify(j.data.to).includes(home.people.reviewer.email))).toBe(true);
		expect((await submit(audit.id)).status).toBe(409);
		const queue = await body<Json>(await api('GET', `/api/v1/labs/${lab}/reviews`, { token: token.reader }));
		expect(queue.waiting.map((w: Json) => w.id)).toContain(audit.id);
	});

	it('does not let an author sign their own audit, even after becoming a reviewer (403)', async () => {
		const people = await makeLab(['lead', 'modeller', 'reviewer']);
		const author = await tokenFor(people.people.modeller.id);
		const slug = people.lab.slug;
		const created = await body<Json>(await api('POST', `/api/v1/labs/${slug}/schemes`, { token: author, json: { scheme: triangleScheme('Own work') } }));
		const audit = await body<Json>(await api('POST', `/api/v1/labs/${slug}/schemes/${created.scheme.id}/audits`, { token: author }));
		expect((await api('POST', `/api/v1/labs/${slug}/audits/${audit.audit.id}/submit`, { token: author, json: { note: '' } })).status).toBe(200);
		// As modeller: the role is too small.
		const asModeller = await api('POST', `/api/v1/labs/${slug}/audits/${audit.audit.id}/sign`, { token: author, json: { password: TEST_PASSWORD, comment: '' } });
		expect(asModeller.status).toBe(403);
		// Made reviewer by the lead: still the author.
		await db.update(schema.labMembers).set({ role: 'reviewer' }).where(and(eq(schema.labMembers.labId, people.lab.id), eq(schema.labMembers.userId, people.people.modeller.id)));
		const asReviewer = await api('POST', `/api/v1/labs/${slug}/audits/${audit.audit.id}/sign`, { token: author, json: { password: TEST_PASSWORD, comment: '' } });
		expect(asReviewer.status).toBe(403);
		expect((await body<Json>(asReviewer)).error.code).toBe('own_audit');
		const stored = await body<Json>(await api('GET', `/api/v1/labs/${slug}/audits/${audit.audit.id}`, { token: author }));
		expect(stored.audit.status).toBe('submitted');
	});

	it('signs with the reviewer’s password (200) and refuses a wrong one (403)', async () => {
		const audit = await runAudit(schemeId);
		expect((await submit(audit.id)).status).toBe(200);
		const wrong = await sign(audit.id, 'not-my-password');
		expect(wrong.status).toBe(403);
		expect((await body<Json>(wrong)).error.code).toBe('bad_password');
		const stillWaiting = await body<Json>(await api('GET', `/api/v1/labs/${lab}/audits/${audit.id}`, { token: token.reader }));
		expect(stillWaiting.audit.status).toBe('submitted');
		expect(stillWaiting.audit.signature).toBeNull();

		const right = await sign(audit.id);
		expect(right.status).toBe(200);
		const signed = await body<Json>(right);
		expect(signed.signature).toMatchObject({ signer: home.people.reviewer.name, comment: 'cycle table checked', sha256: audit.sha256 });
		expect((await sign(audit.id)).status).toBe(409);
		const verify = await body<Json>(await api('GET', `/api/v1/labs/${lab}/audits/${audit.id}/verify`, { token: token.reader }));
		expect(verify).toMatchObject({ matches: true, signed: audit.sha256 });
	});

	it('returns an audit with comments, and needs a comment to do so', async () => {
		const audit = await runAudit(schemeId);
		expect((await submit(audit.id)).status).toBe(200);
		const empty = await api('POST', `/api/v1/labs/${lab}/audits/${audit.id}/return`, { token: token.reviewer, json: { comment: '  ' } });
		expect(empty.status).toBe(400);
		const returned = await api('POST', `/api/v1/labs/${lab}/audits/${audit.id}/return`, { token: token.reviewer, json: { comment: 'Where does k_c− come from?' } });
		expect(returned.status).toBe(200);
		const stored = await body<Json>(await api('GET', `/api/v1/labs/${lab}/audits/${audit.id}`, { token: token.modeller }));
		expect(stored.audit.status).toBe('returned');
		expect(stored.audit.events.map((e: Json) => e.kind)).toEqual(['submitted', 'returned']);
	});

	describe('a signed audit', () => {
		let audit: Json;
		beforeAll(async () => {
			audit = await runAudit(schemeId);
			expect((await submit(audit.id)).status).toBe(200);
			expect((await sign(audit.id)).status).toBe(200);
		});

		/** The message PostgreSQL gave for a refused statement (drizzle wraps it as the cause). */
		async function refusal(statement: Parameters<typeof db.execute>[0]): Promise<string> {
			try {
				await db.execute(statement);
			} catch (err) {
				const e = err as Error & { cause?: Error };
				return e.cause?.message ?? e.message;
			}
			return 'the statement was accepted';
		}

		it('cannot be changed or deleted by plain SQL', async () => {
			expect(await refusal(sql`update audits set status = 'draft' where id = ${audit.id}`)).toMatch(/signed and cannot be changed/);
			expect(await refusal(sql`update audits set results = '{}'::jsonb where id = ${audit.id}`)).toMatch(/signed and cannot be changed/);
			expect(await refusal(sql`delete from audits where id = ${audit.id}`)).toMatch(/signed and cannot be deleted|permission denied/);
			expect(await refusal(sql`delete from signatures where audit_id = ${audit.id}`)).toMatch(/append-only|permission denied/);
			expect(await refusal(sql`update signatures set comment = 'edited' where audit_id = ${audit.id}`)).toMatch(/append-only|permission denied/);
			const [row] = await db.select().from(schema.audits).where(eq(schema.audits.id, audit.id));
			expect(row.status).toBe('signed');
			expect(row.sha256).toBe(audit.sha256);
		});

		it('carries its signature in the PDF report', async () => {
			const pdf = await api('GET', `/api/v1/labs/${lab}/audits/${audit.id}/export/pdf`, { token: token.reader });
			expect(pdf.status).toBe(200);
			expect(pdf.headers.get('content-disposition')).toContain('Audited triangle-r1-audit.pdf');
			const unsigned = await api('GET', `/api/v1/labs/${lab}/audits/${(await runAudit(schemeId)).id}/export/pdf`, { token: token.reader });
			// The signature block makes the signed report differ from an unsigned one of the same inputs.
			expect((await pdf.arrayBuffer()).byteLength).not.toBe((await unsigned.arrayBuffer()).byteLength);
		});

		it('is caught by /verify when its stored results are tampered with behind the triggers', async () => {
			// The triggers stop every ordinary UPDATE (previous test), so tampering needs someone who can switch them
			// off: a superuser setting session_replication_role = replica skips ordinary triggers for that session. The
			// app's own role may not (tests/integration/db-roles.spec.ts), so we do it as the owner on one pinned
			// connection, commit the forged result, and then ask the API, through its own pool, whether the stored audit
			// still matches its hash. The forged row is put back afterwards, so that the backup test's check of every
			// signed audit in the database sees only real records.
			const owner = new pg.Pool({ connectionString: process.env.DATABASE_OWNER_URL ?? process.env.DATABASE_URL, max: 1 });
			const behindTriggers = async (statement: string, values: unknown[]) => {
				const client = await owner.connect();
				try {
					await client.query('begin');
					await client.query('set local session_replication_role = replica');
					const changed = await client.query(statement, values);
					await client.query('commit');
					return changed.rowCount;
				} finally {
					client.release();
				}
			};
			const original = (await owner.query('select results::text as results from audits where id = $1', [audit.id])).rows[0].results as string;
			let verify: Json;
			try {
				expect(await behindTriggers(`update audits set results = results || '{"cycleCount": 999}'::jsonb where id = $1 and status = 'signed'`, [audit.id])).toBe(1);
				verify = await body<Json>(await api('GET', `/api/v1/labs/${lab}/audits/${audit.id}/verify`, { token: token.reader }));
			} finally {
				await behindTriggers('update audits set results = $2::jsonb where id = $1', [audit.id, original]);
				await owner.end();
			}
			expect(verify.matches).toBe(false);
			expect(verify.stored).toBe(audit.sha256);
			expect(verify.signed).toBe(audit.sha256);
			expect(verify.recomputed).not.toBe(audit.sha256);
		});
	});
});
