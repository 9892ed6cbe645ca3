/**
 * Reading the local mail sink (development and tests, where it stands in for a mail server): each signed-in person
 * reads only the caught messages addressed to their own account's address, newest first. Nobody reads another
 * person's mail, lab lead or not: sign-in links and invitation tokens in it are that person's secrets.
 * Also the lab's activity log, for lab leads.
 */
import { and, desc, eq, sql } from 'drizzle-orm';
import { db, schema } from './db';

function addressedTo(email: string) {
	return sql`${email.trim().toLowerCase()} = any(${schema.caughtMail.envelopeTo})`;
}

/** The caught messages to this address (the signed-in person's own), newest first. */
export async function caughtMailFor(email: string, limit = 100) {
	return db
		.select({
			id: schema.caughtMail.id,
			to: schema.caughtMail.envelopeTo,
			subject: schema.caughtMail.subject,
			receivedAt: schema.caughtMail.receivedAt,
			textBody: schema.caughtMail.textBody
		})
		.from(schema.caughtMail)
		.where(addressedTo(email))
		.orderBy(desc(schema.caughtMail.receivedAt), desc(schema.caughtMail.id))
		.limit(limit);
}

/** One caught message if it was addressed to this address, else null (no hint whether it exists). */
export async function caughtMessageFor(email: string, id: number) {
	if (!Number.isSafeInteger(id) || id <= 0) return null;
	const [row] = await db
		.select({
			id: schema.caughtMail.id,
			to: schema.caughtMail.envelopeTo,
			subject: schema.caughtMail.subject,
			receivedAt: schema.caughtMail.receivedAt,
			textBody: schema.caughtMail.textBody
		})
		.from(schema.caughtMail)
		.where(and(eq(schema.caughtMail.id, id), addressedTo(email)));
	return row ?? null;
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
