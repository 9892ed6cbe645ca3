import { json } from '@sveltejs/kit';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { recentlySigned, reviewQueue } from '$lib/server/reviews';
import type { RequestHandler } from './$types';

/** Audits waiting for review (oldest first) and the recently signed ones. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const [waiting, signed] = await Promise.all([reviewQueue(access.lab.id), recentlySigned(access.lab.id)]);
	return json({ waiting, signed });
});
