import { json } from '@sveltejs/kit';
import { count, desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { db, schema } from '$lib/server/db';
import type { RequestHandler } from './$types';

const activityQuery = z.object({
	page: z.coerce.number().int().min(1).default(1),
	pageSize: z.coerce.number().int().min(1).max(200).default(50)
});

/** The lab's append-only activity log, newest first (lab lead only). */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'manage');
	const { page, pageSize } = activityQuery.parse(Object.fromEntries(event.url.searchParams));
	const where = eq(schema.activityLog.labId, access.lab.id);
	const [entries, [{ total }]] = await Promise.all([
		db
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
			.where(where)
			.orderBy(desc(schema.activityLog.createdAt), desc(schema.activityLog.id))
			.limit(pageSize)
			.offset((page - 1) * pageSize),
		db.select({ total: count() }).from(schema.activityLog).where(where)
	]);
	return json({ entries, total, page, pageSize, pages: Math.max(1, Math.ceil(total / pageSize)) });
});
