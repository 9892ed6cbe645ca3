import { json } from '@sveltejs/kit';
import { apiRoute, labFromEvent, revisionParam } from '$lib/server/api';
import { getRevision } from '$lib/server/schemes';
import type { RequestHandler } from './$types';

/** One revision with its scheme document. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	return json({ revision: await getRevision(access.lab.id, event.params.scheme, revisionParam(event.params.n)) });
});
