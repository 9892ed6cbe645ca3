import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiRoute, labFromEvent, readJson } from '$lib/server/api';
import { returnAudit } from '$lib/server/reviews';
import type { RequestHandler } from './$types';

const returnBody = z.object({ comment: z.string().trim().min(1, 'Say what should change: a returned audit needs a comment.').max(4000) });

/** Returns a submitted audit to its author with comments. */
export const POST: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'review');
	const { comment } = await readJson(event.request, returnBody);
	await returnAudit(access, event.params.audit, comment);
	return json({ status: 'returned' });
});
