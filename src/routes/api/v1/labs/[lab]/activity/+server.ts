import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { activityForLab } from '$lib/server/mailbox';
import type { RequestHandler } from './$types';

const activityQuery = z.object({
	page: z.coerce.number().int().min(1).default(1),
	pageSize: z.coerce.number().int().min(1).max(200).default(50)
});

/** The lab's append-only activity log, newest first (lab lead only). `hasMore` says whether a next page exists. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'manage');
	const query = activityQuery.parse(Object.fromEntries(event.url.searchParams));
	const { rows, page, hasMore } = await activityForLab(access.lab.id, query);
	return json({ entries: rows, page, pageSize: query.pageSize, hasMore });
});
