import { json } from '@sveltejs/kit';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { getScheme } from '$lib/server/schemes';
import type { RequestHandler } from './$types';

/** One scheme with its newest revision. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	return json({ scheme: await getScheme(access.lab.id, event.params.scheme) });
});
