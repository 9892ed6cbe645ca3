import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiError, apiRoute, labFromEvent, readJson } from '$lib/server/api';
import { EngineError } from '$lib/engine';
import { conditionsInput, previewAudit } from '$lib/server/audits';
import { getRevision, getScheme } from '$lib/server/schemes';
import type { RequestHandler } from './$types';

const previewBody = z
	.object({
		revision: z.number().int().positive().optional(),
		conditions: conditionsInput.default({})
	})
	.strict();

/**
 * The audit of a revision (default: the newest) at changed conditions, computed and answered as escapement.audit/1
 * without storing anything. Any member may preview; storing an audit is POST …/audits.
 */
export const POST: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const body = await readJson(event.request, previewBody);
	const revision = body.revision
		? await getRevision(access.lab.id, event.params.scheme, body.revision)
		: (await getScheme(access.lab.id, event.params.scheme)).latest;
	try {
		return json(previewAudit(revision.scheme, body.conditions).results);
	} catch (err) {
		// The engine refuses some conditions (e.g. a steady state it cannot reach); say so instead of a 500.
		if (err instanceof EngineError) return apiError(422, 'engine', err.message);
		throw err;
	}
});
