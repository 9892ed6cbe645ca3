/**
 * Reading the local mail sink: a lab lead sees the caught messages addressed to people of their lab (members and
 * open invitations), newest first. Messages to other addresses stay hidden.
 */
import { and, desc, eq, sql } from 'drizzle-orm';
import { error } from '@sveltejs/kit';
import { db, schema } from './db';

function labAddresses(labId: string) {
	return sql`(select lower(u.email) from lab_members m join users u on u.id = m.user_id where m.lab_id = ${labId}
		union select lower(i.email) from invitations i where i.lab_id = ${labId})`;
}

export async function caughtMailForLab(labId: string, limit = 100) {
	return db
		.select({
			id: schema.caughtMail.id,
			to: schema.caughtMail.envelopeTo,
			subject: schema.caughtMail.subject,
			receivedAt: schema.caughtMail.receivedAt,
			textBody: schema.caughtMail.textBody
		})
		.from(schema.caughtMail)
		.where(sql`${schema.caughtMail.envelopeTo} && array${labAddresses(labId)}`)
		.orderBy(desc(schema.caughtMail.receivedAt))
		.limit(limit);
}

export async function caughtMessage(labId: string, id: number) {
	const [row] = await db
		.select()
		.from(schema.caughtMail)
		.where(and(eq(schema.caughtMail.id, id), sql`${schema.caughtMail.envelopeTo} && array${labAddresses(labId)}`));
	if (!row) error(404, { message: 'No such message for this lab.', code: 'not_found' });
	return row;
}

export async function activityForLab(labId: string, opts: { page?: number; pageSize?: number } = {}) {
	const pageSize = Math.min(opts.pageSize ?? 50, 200);
	const page = Math.max(opts.page ?? 1, 1);
	const rows = await db
		.select({
			id: schema.activityLog.id,
			kind: schema.activityLog.kind,
			summary: schema.activityLog.summary,
			details: schema.activityLog.details,
			createdAt: schema.activityLog.createdAt,
			actorName: schema.users.name,
			actorEmail: schema.users.email
		})
		.from(schema.activityLog)
		.leftJoin(schema.users, eq(schema.users.id, schema.activityLog.actorId))
		.where(eq(schema.activityLog.labId, labId))
		.orderBy(desc(schema.activityLog.createdAt), desc(schema.activityLog.id))
		.limit(pageSize + 1)
		.offset((page - 1) * pageSize);
	return { rows: rows.slice(0, pageSize), page, hasMore: rows.length > pageSize };
}
