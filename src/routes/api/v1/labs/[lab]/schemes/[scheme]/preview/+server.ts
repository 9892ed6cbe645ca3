import { json } from '@sveltejs/kit';
import { z, ZodError } from 'zod';
import { apiError, apiRoute, labFromEvent } from '$lib/server/api';
import { EngineError } from '$lib/engine';
import { conditionsInput, previewAuditJson } from '$lib/server/audits';
import { getRevision, getScheme, validScheme } from '$lib/server/schemes';
import type { RequestHandler } from './$types';

/** Largest JSON body a preview reads: room for a scheme at the import's step limit with every field filled in. */
const PREVIEW_MAX_BYTES = 4 * 1024 * 1024;

const previewBody = z
	.object({
		scheme: z.unknown().optional(),
		revision: z.number().int().positive().optional(),
		conditions: conditionsInput.default({})
	})
	.strict()
	.superRefine((body, ctx) => {
		if (body.scheme !== undefined && body.revision !== undefined)
			ctx.addIssue({
				code: 'custom',
				path: ['scheme'],
				message: 'Give either "scheme" (an edited document, previewed as sent) or "revision" (a saved one), not both.'
			});
	});

/** The body as text, refused above PREVIEW_MAX_BYTES whatever Content-Length claims. */
async function readBody(request: Request): Promise<{ ok: true; value: unknown } | { ok: false; response: Response }> {
	const tooLarge = () => ({
		ok: false as const,
		response: apiError(413, 'too_large', `The request body is larger than ${PREVIEW_MAX_BYTES / 1024 / 1024} MB. Preview a smaller scheme, or save it and preview by revision.`)
	});
	const declared = Number(request.headers.get('content-length'));
	if (Number.isFinite(declared) && declared > PREVIEW_MAX_BYTES) return tooLarge();
	const text = await request.text();
	if (new TextEncoder().encode(text).byteLength > PREVIEW_MAX_BYTES) return tooLarge();
	try {
		return { ok: true, value: JSON.parse(text) };
	} catch {
		throw new ZodError([{ code: 'custom', path: [], message: 'The body must be JSON (Content-Type: application/json).', input: undefined }]);
	}
}

/**
 * The audit at changed conditions, computed and answered as escapement.audit/1 without storing anything, of either
 * - an edited scheme document sent as `scheme` (what the scheme page's unsaved tables hold), validated like a save:
 *   422 invalid_scheme with the JSON path of each problem; or
 * - a saved revision, `revision` (default: the newest).
 * Any member may preview; storing an audit is POST …/audits, saving an edit is POST …/revisions.
 */
export const POST: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const raw = await readBody(event.request);
	if (!raw.ok) return raw.response;
	const body = previewBody.parse(raw.value);
	let scheme;
	if (body.scheme !== undefined) {
		await getScheme(access.lab.id, event.params.scheme); // 404 for a scheme this lab does not have
		// SchemeInputError → 422 with the JSON path of every problem; past SCHEME_LIMITS it names the limit first
		scheme = validScheme(body.scheme);
	} else {
		scheme = body.revision
			? (await getRevision(access.lab.id, event.params.scheme, body.revision)).scheme
			: (await getScheme(access.lab.id, event.params.scheme)).latest.scheme;
	}
	try {
		return new Response(await previewAuditJson(scheme, body.conditions), { headers: { 'content-type': 'application/json' } });
	} catch (err) {
		// The engine refuses some conditions (e.g. a steady state it cannot reach); say so instead of a 500.
		if (err instanceof EngineError) return apiError(422, 'engine', err.message);
		throw err;
	}
});
