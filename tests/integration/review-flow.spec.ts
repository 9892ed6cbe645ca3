/**
 * The review workflow end to end through the services, with the real job queue and the local SMTP sink:
 * submit → reviewers mailed → sign (password again) → author mailed; return → author mailed; signed audits frozen.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import { db, schema, makeLab, TEST_PASSWORD } from './db';
import { createScheme } from '../../src/lib/server/schemes';
import { runAudit, getAudit, verifyAudit } from '../../src/lib/server/audits';
import { submitForReview, signAudit, returnAudit, reviewQueue } from '../../src/lib/server/reviews';
import { startJobs, stopJobs } from '../../src/lib/server/jobs';
import { stepperWithFutileBranch } from '../../src/lib/server/demo/schemes';
import type { LabAccess } from '../../src/lib/server/access';

// This file works the mail queue itself, as the web server does; other test files only queue.
beforeAll(async () => {
	await startJobs();
});
afterAll(async () => {
	await stopJobs();
});

async function mailTo(address: string, subjectPart: string, timeoutMs = 45_000) {
	const until = Date.now() + timeoutMs;
	while (Date.now() < until) {
		const rows = await db
			.select()
			.from(schema.caughtMail)
			.where(sql`${address} = any(${schema.caughtMail.envelopeTo}) and ${schema.caughtMail.subject} like ${'%' + subjectPart + '%'}`);
		if (rows.length) return rows[0];
		await new Promise((r) => setTimeout(r, 200));
	}
	throw new Error(`no mail to ${address} with "${subjectPart}" within ${timeoutMs} ms`);
}

/** The database's own message of a refused statement (drizzle wraps it in a "Failed query" error). */
async function refusal(statement: Promise<unknown>): Promise<string> {
	try {
		await statement;
	} catch (err) {
		const e = err as { message: string; cause?: { message?: string } };
		return e.cause?.message ?? e.message;
	}
	return 'not refused';
}

async function setting() {
	const { lab, people } = await makeLab(['lead', 'modeller', 'reviewer']);
	const access = (role: 'lead' | 'modeller' | 'reviewer'): LabAccess => ({
		lab,
		role,
		user: { id: people[role].id, email: people[role].email, name: people[role].name }
	});
	const created = await createScheme(access('modeller'), { scheme: stepperWithFutileBranch() });
	const audit = await runAudit(access('modeller'), created.scheme.id);
	return { lab, people, access, audit };
}

describe('review and sign-off with mail through the local SMTP sink', () => {
	it('mails the reviewers on submission and the author on signature; the signature records the hash', async () => {
		const { people, access, audit, lab } = await setting();
		await submitForReview(access('modeller'), audit.id, 'Please check the futile branch.');
		const request = await mailTo(people.reviewer.email, 'Review requested');
		expect(request.textBody).toContain(`/labs/${lab.slug}/audits/${audit.id}`);
		expect(request.textBody).toContain('Please check the futile branch.');
		expect((await reviewQueue(lab.id)).map((q) => q.id)).toContain(audit.id);

		await expect(signAudit(access('reviewer'), audit.id, { password: 'wrong-password', comment: '' })).rejects.toMatchObject({ status: 403 });
		await signAudit(access('reviewer'), audit.id, { password: TEST_PASSWORD, comment: 'Balanced.' });
		const signedMail = await mailTo(people.modeller.email, 'Signed');
		expect(signedMail.textBody).toContain(audit.sha256);

		const stored = await getAudit(lab.id, audit.id);
		expect(stored.status).toBe('signed');
		expect(stored.signature?.sha256).toBe(audit.sha256);
		expect(stored.signature?.signerId).toBe(people.reviewer.id);
		expect((await verifyAudit(stored)).matches).toBe(true);
		expect(stored.events.map((e) => e.kind)).toEqual(['submitted', 'signed']);
	});

	it('returns an audit with comments to its author, who can resubmit', async () => {
		const { people, access, audit, lab } = await setting();
		await submitForReview(access('modeller'), audit.id, '');
		await returnAudit(access('reviewer'), audit.id, 'The ADP release rate needs its source.');
		const returned = await mailTo(people.modeller.email, 'Returned with comments');
		expect(returned.textBody).toContain('The ADP release rate needs its source.');
		expect((await getAudit(lab.id, audit.id)).status).toBe('returned');
		await submitForReview(access('modeller'), audit.id, 'Source added in the note.');
		expect((await getAudit(lab.id, audit.id)).status).toBe('submitted');
	});

	it('refuses a signature by the audit’s own author, even as reviewer', async () => {
		const { lab, people } = await makeLab(['reviewer', 'modeller']);
		const asReviewer: LabAccess = { lab, role: 'reviewer', user: { id: people.reviewer.id, email: people.reviewer.email, name: null } };
		const asModeller: LabAccess = { lab, role: 'modeller', user: { id: people.modeller.id, email: people.modeller.email, name: null } };
		// The reviewer ran the audit while they were a modeller.
		const own: LabAccess = { ...asModeller, user: asReviewer.user };
		const created = await createScheme(own, { scheme: stepperWithFutileBranch() });
		const audit = await runAudit(own, created.scheme.id);
		await expect(submitForReview(asModeller, audit.id, '')).rejects.toMatchObject({ status: 409 }); // no other reviewer
		await db.update(schema.labMembers).set({ role: 'reviewer' }).where(eq(schema.labMembers.userId, people.modeller.id));
		await submitForReview(asModeller, audit.id, '');
		await expect(signAudit(asReviewer, audit.id, { password: TEST_PASSWORD, comment: '' })).rejects.toMatchObject({ status: 403 });
	});

	it('lets PostgreSQL refuse UPDATE and DELETE of a signed audit, its signature and the activity log', async () => {
		const { people, access, audit, lab } = await setting();
		await submitForReview(access('modeller'), audit.id, '');
		await signAudit(access('reviewer'), audit.id, { password: TEST_PASSWORD, comment: '' });
		expect(await refusal(db.execute(sql`update audits set results = '{}'::jsonb where id = ${audit.id}`))).toMatch(/signed/);
		expect(await refusal(db.execute(sql`update audits set status = 'draft' where id = ${audit.id}`))).toMatch(/signed/);
		expect(await refusal(db.execute(sql`delete from audits where id = ${audit.id}`))).toMatch(/signed|permission denied/);
		expect(await refusal(db.execute(sql`delete from signatures where audit_id = ${audit.id}`))).toMatch(/append-only|permission denied/);
		expect(await refusal(db.execute(sql`update activity_log set summary = 'x' where lab_id = ${lab.id}`))).toMatch(/append-only|permission denied/);
		const kinds = (await db.select().from(schema.activityLog).where(eq(schema.activityLog.labId, lab.id))).map((r) => r.kind);
		expect(kinds).toEqual(expect.arrayContaining(['scheme-created', 'audit-run', 'audit-submitted', 'audit-signed']));
		expect(people.reviewer.id).not.toBe(people.modeller.id);
	});
});
