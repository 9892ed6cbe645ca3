/**
 * State changes raced against each other with Promise.all: each is guarded in one transaction (a status-checked
 * UPDATE or a lock on the lab), so exactly one side wins and the other gets 409 with a message, never a 500 or a
 * half-applied change. Regression tests of: a returned audit signed 10 ms later, three parallel submits making two
 * submissions and two mails, two leads demoting each other leaving a lab without a lead.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { and, eq, sql } from 'drizzle-orm';
import { db, schema, makeLab, TEST_PASSWORD } from './db';
import { createScheme } from '../../src/lib/server/schemes';
import { runAudit, getAudit } from '../../src/lib/server/audits';
import { submitForReview, signAudit, returnAudit } from '../../src/lib/server/reviews';
import { changeRole, removeMember } from '../../src/lib/server/members';
import { stopJobs } from '../../src/lib/server/jobs';
import { stepperWithFutileBranch } from '../../src/lib/server/demo/schemes';
import type { LabAccess } from '../../src/lib/server/access';

afterAll(async () => {
	await stopJobs();
});

type Person = { id: string; email: string; name: string | null };
const as = (lab: LabAccess['lab'], role: LabAccess['role'], p: Person): LabAccess => ({ lab, role, user: { id: p.id, email: p.email, name: p.name } });

/** Settled outcomes as 'ok' or the HTTP status of the refusal (a plain Error, i.e. a would-be 500, stays visible). */
async function outcomes(tasks: Promise<unknown>[]): Promise<(string | number)[]> {
	const settled = await Promise.allSettled(tasks);
	return settled.map((s) => (s.status === 'fulfilled' ? 'ok' : ((s.reason as { status?: number }).status ?? `500: ${(s.reason as Error).message}`)));
}

async function submittedAudit() {
	const { lab, people } = await makeLab(['lead', 'modeller', 'reviewer']);
	const created = await createScheme(as(lab, 'modeller', people.modeller), { scheme: stepperWithFutileBranch() });
	const audit = await runAudit(as(lab, 'modeller', people.modeller), created.scheme.id);
	return { lab, people, audit };
}

async function mailJobsAbout(auditId: string, subjectPart: string): Promise<number> {
	const { rows } = await db.execute(
		sql`select 1 from pgboss.job where name = 'mail' and data->>'subject' like ${subjectPart + '%'} and data->>'text' like ${'%/audits/' + auditId + '%'}`
	);
	return rows.length;
}

describe('races between state changes', () => {
	it('sign against return: one wins, the other gets 409; a returned audit is never signed', async () => {
		// [trade] first committer wins; the loser re-reads the status under the row lock.
		for (let round = 0; round < 3; round++) {
			const { lab, people, audit } = await submittedAudit();
			await submitForReview(as(lab, 'modeller', people.modeller), audit.id, '');
			const reviewer = as(lab, 'reviewer', people.reviewer);
			const result = await outcomes([
				signAudit(reviewer, audit.id, { password: TEST_PASSWORD, comment: 'Fine.' }),
				returnAudit(reviewer, audit.id, 'Needs a source.')
			]);
			expect(result.filter((r) => r === 'ok')).toHaveLength(1);
			expect(result.filter((r) => r === 409)).toHaveLength(1);
			const stored = await getAudit(lab.id, audit.id);
			const kinds = stored.events.map((e) => e.kind);
			if (result[0] === 'ok') {
				expect(stored.status).toBe('signed');
				expect(stored.signature).not.toBeNull();
				expect(kinds).toEqual(['submitted', 'signed']);
			} else {
				expect(stored.status).toBe('returned');
				expect(stored.signature).toBeNull();
				expect(kinds).toEqual(['submitted', 'returned']);
			}
		}
	});

	it('two signatures at once: one signature row, the second signer gets 409', async () => {
		const { lab, people, audit } = await submittedAudit();
		const [second] = await db.insert(schema.users).values({ email: `second-${audit.id}@lab.example`, name: 'Second Reviewer', passwordHash: people.reviewer.passwordHash }).returning();
		await db.insert(schema.labMembers).values({ labId: lab.id, userId: second.id, role: 'reviewer' });
		await submitForReview(as(lab, 'modeller', people.modeller), audit.id, '');
		const result = await outcomes([
			signAudit(as(lab, 'reviewer', people.reviewer), audit.id, { password: TEST_PASSWORD, comment: '' }),
			signAudit(as(lab, 'reviewer', second), audit.id, { password: TEST_PASSWORD, comment: '' })
		]);
		expect(result.sort()).toEqual([409, 'ok']);
		expect(await db.select().from(schema.signatures).where(eq(schema.signatures.auditId, audit.id))).toHaveLength(1);
	});

	it('three parallel submits make one submission and one mail; the other two get 409', async () => {
		const { lab, people, audit } = await submittedAudit();
		const modeller = as(lab, 'modeller', people.modeller);
		const result = await outcomes([submitForReview(modeller, audit.id, 'a'), submitForReview(modeller, audit.id, 'b'), submitForReview(modeller, audit.id, 'c')]);
		expect(result.filter((r) => r === 'ok')).toHaveLength(1);
		expect(result.filter((r) => r === 409)).toHaveLength(2);
		const events = await db.select().from(schema.reviewEvents).where(and(eq(schema.reviewEvents.auditId, audit.id), eq(schema.reviewEvents.kind, 'submitted')));
		expect(events).toHaveLength(1);
		expect(await mailJobsAbout(audit.id, 'Review requested')).toBe(1);
	});

	it('two leads demoting each other: one change wins, the lab keeps a lead, the loser gets 409', async () => {
		for (const change of ['demote', 'remove'] as const) {
			const { lab, people } = await makeLab(['lead', 'reader']);
			const [other] = await db.insert(schema.users).values({ email: `lead2-${lab.slug}-${change}@lab.example`, name: 'Second Lead' }).returning();
			await db.insert(schema.labMembers).values({ labId: lab.id, userId: other.id, role: 'lead' });
			const a = as(lab, 'lead', people.lead);
			const b = as(lab, 'lead', other);
			const act = (who: LabAccess, target: string) => (change === 'demote' ? changeRole(who, target, 'reader') : removeMember(who, target));
			const result = await outcomes([act(a, other.id), act(b, people.lead.id)]);
			expect(result.sort()).toEqual([409, 'ok']);
			const leads = await db.select().from(schema.labMembers).where(and(eq(schema.labMembers.labId, lab.id), eq(schema.labMembers.role, 'lead')));
			expect(leads).toHaveLength(1);
		}
	});
});
