/** Lab members: invitations by e-mail, accepting them, role changes and the rule that a lab keeps a lead. */
import { afterAll, describe, expect, it } from 'vitest';
import { and, eq, sql } from 'drizzle-orm';
import { db, schema, makeLab } from './db';
import { acceptInvitation, changeRole, invite, listMembers, removeMember } from '../../src/lib/server/members';
import { findLabAccess, type LabAccess } from '../../src/lib/server/access';
import { verifyPassword } from '../../src/lib/server/passwords';
import { stopJobs } from '../../src/lib/server/jobs';

afterAll(async () => {
	await stopJobs();
});

function accessOf(lab: LabAccess['lab'], role: LabAccess['role'], user: { id: string; email: string; name: string | null }): LabAccess {
	return { lab, role, user: { id: user.id, email: user.email, name: user.name } };
}

describe('invitations and roles', () => {
	it('invites a new person, who joins with the invited role and a password of their own; the link works once', async () => {
		const { lab, people, tag } = await makeLab(['lead', 'modeller']);
		const lead = accessOf(lab, 'lead', people.lead);
		const email = `newcomer-${tag}@lab.example`;
		const { link } = await invite(lead, email, 'reviewer');
		const token = link.split('/invite/')[1];
		expect(token.length).toBeGreaterThan(20);
		// The mail is queued for the web server's worker.
		const jobs = await db.execute(sql`select data from pgboss.job where name = 'mail' and data->>'to' = ${email}`);
		expect(jobs.rows).toHaveLength(1);

		await expect(acceptInvitation(token, { signedInUserId: null, name: 'New Comer', password: 'short' })).rejects.toMatchObject({ status: 400 });
		const joined = await acceptInvitation(token, { signedInUserId: null, name: 'New Comer', password: 'a-long-enough-password' });
		expect(joined.labSlug).toBe(lab.slug);
		const [user] = await db.select().from(schema.users).where(eq(schema.users.email, email));
		expect(await verifyPassword('a-long-enough-password', user.passwordHash)).toBe(true);
		expect((await findLabAccess(user.id, lab.slug))?.role).toBe('reviewer');
		await expect(acceptInvitation(token, { signedInUserId: user.id })).rejects.toMatchObject({ status: 404 });
	});

	it('lets an existing account accept only when signed in as that address', async () => {
		const a = await makeLab(['lead']);
		const b = await makeLab(['modeller']);
		const { link } = await invite(accessOf(a.lab, 'lead', a.people.lead), b.people.modeller.email, 'modeller');
		const token = link.split('/invite/')[1];
		await expect(acceptInvitation(token, { signedInUserId: a.people.lead.id })).rejects.toMatchObject({ status: 403 });
		await acceptInvitation(token, { signedInUserId: b.people.modeller.id });
		expect((await findLabAccess(b.people.modeller.id, a.lab.slug))?.role).toBe('modeller');
	});

	it('refuses invitations and role changes by anyone but the lead, and keeps at least one lead', async () => {
		const { lab, people } = await makeLab(['lead', 'modeller', 'reader']);
		const lead = accessOf(lab, 'lead', people.lead);
		await expect(invite(accessOf(lab, 'modeller', people.modeller), 'x@lab.example', 'reader')).rejects.toMatchObject({ status: 403 });
		await expect(changeRole(accessOf(lab, 'modeller', people.modeller), people.reader.id, 'lead')).rejects.toMatchObject({ status: 403 });
		await expect(changeRole(lead, people.lead.id, 'reader')).rejects.toMatchObject({ status: 409 });
		await expect(removeMember(lead, people.lead.id)).rejects.toMatchObject({ status: 409 });
		await expect(invite(lead, people.reader.email, 'modeller')).rejects.toMatchObject({ status: 409 });

		await changeRole(lead, people.reader.id, 'reviewer');
		await removeMember(lead, people.modeller.id);
		const members = await listMembers(lab.id);
		expect(members.map((m) => [m.email, m.role]).sort()).toEqual([[people.lead.email, 'lead'], [people.reader.email, 'reviewer']].sort());
		const log = await db.select().from(schema.activityLog).where(and(eq(schema.activityLog.labId, lab.id)));
		expect(log.map((r) => r.kind)).toEqual(expect.arrayContaining(['role-changed', 'member-removed']));
	});
});
