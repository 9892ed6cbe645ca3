import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiRoute, labFromEvent, readJson } from '$lib/server/api';
import { submitForReview } from '$lib/server/reviews';
import type { RequestHandler } from './$types';

const submitBody = z.object({ note: z.string().max(4000).default('') });

/** Submits an audit for review; the lab's reviewers are mailed. */
export const POST: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'model');
	const { note } = await readJson(event.request, submitBody);
	const { notified } = await submitForReview(access, event.params.audit, note);
	return json({ status: 'submitted', notified });
});
