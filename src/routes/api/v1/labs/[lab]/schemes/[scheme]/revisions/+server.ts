import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiRoute, labFromEvent, readJson } from '$lib/server/api';
import { listRevisions, saveRevision } from '$lib/server/schemes';
import type { RequestHandler } from './$types';

/** Every revision of a scheme, newest first. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	return json({ revisions: await listRevisions(access.lab.id, event.params.scheme) });
});

const revisionBody = z.object({
	scheme: z.unknown().refine((v) => v !== undefined, 'Give the scheme document (format "escapement.scheme/1").'),
	note: z.string().max(2000).optional()
});

/** Saves a new revision; earlier revisions never change. */
export const POST: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'model');
	const body = await readJson(event.request, revisionBody);
	const saved = await saveRevision(access, event.params.scheme, body);
	return json({ revision: saved.revision }, { status: 201 });
});
