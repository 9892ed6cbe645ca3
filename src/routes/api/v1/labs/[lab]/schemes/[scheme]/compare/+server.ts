import { error, json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { getRevision, getScheme } from '$lib/server/schemes';
import { diffSchemes } from '$lib/scheme-diff';
import type { RequestHandler } from './$types';

const compareQuery = z.object({
	from: z.coerce.number().int().min(1).optional(),
	to: z.coerce.number().int().min(1).optional()
});

/** What changed between two revisions (`?from=&to=`; by default the newest against the one before). */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const query = compareQuery.parse(Object.fromEntries(event.url.searchParams));
	const to = query.to ?? (await getScheme(access.lab.id, event.params.scheme)).latest.number;
	const from = query.from ?? to - 1;
	if (from < 1) error(400, { message: 'This scheme has one revision only; there is nothing to compare it with yet.', code: 'invalid' });
	const [before, after] = await Promise.all([getRevision(access.lab.id, event.params.scheme, from), getRevision(access.lab.id, event.params.scheme, to)]);
	return json({ from, to, diff: diffSchemes(before.scheme, after.scheme) });
});
