/**
 * The JSON API's one error format, `{ error: { code, message, details } }`, and the wrapper every `+server.ts`
 * under /api/v1 uses: it turns SvelteKit's error(), zod failures and scheme validation errors into that format.
 */
import { error, isHttpError, json, type RequestEvent } from '@sveltejs/kit';
import { z, ZodError } from 'zod';
import { SchemeInputError } from './schemes';
import { EngineError } from '../engine';
import { requireLab, requireUser, type Capability, type LabAccess } from './access';
import { DATABASE_DOWN_MESSAGE, isDatabaseDown, markDatabaseDown } from './db';
import { EngineBusyError } from './engine-pool';

export interface ApiErrorBody {
	error: { code: string; message: string; details: unknown };
}

export function apiError(status: number, code: string, message: string, details: unknown = null): Response {
	return json({ error: { code, message, details } } satisfies ApiErrorBody, { status });
}

function codeFor(status: number): string {
	return ({ 400: 'invalid', 401: 'unauthenticated', 403: 'forbidden', 404: 'not_found', 409: 'conflict', 413: 'too_large', 422: 'invalid_scheme' } as Record<number, string>)[status] ?? 'error';
}

/** Wraps a route handler so that every failure answers in the API's error format. */
export function apiRoute<E extends RequestEvent>(handler: (event: E) => Promise<Response> | Response) {
	return async (event: E): Promise<Response> => {
		try {
			return await handler(event);
		} catch (err) {
			if (isHttpError(err)) return apiError(err.status, err.body.code ?? codeFor(err.status), err.body.message);
			if (err instanceof ZodError)
				return apiError(400, 'invalid', 'The request body is not valid; see details for each field.', err.issues.map((i) => ({ path: i.path.join('.'), message: i.message })));
			if (err instanceof SchemeInputError) return apiError(422, 'invalid_scheme', err.message, err.issues);
			// The engine refuses schemes it cannot audit as entered (e.g. zero rates that split it into closed classes).
			if (err instanceof EngineError) return apiError(422, 'engine', err.message);
			if (err instanceof Response) throw err;
			// The body stream refused past BODY_SIZE_LIMIT (adapter-node) while the handler read it.
			if ((err as { status?: number }).status === 413) return apiError(413, 'too_large', 'The request body is larger than the server accepts (rate tables up to 10 MB).');
			if (isDatabaseDown(err)) {
				markDatabaseDown(err);
				return apiError(503, 'database_unavailable', DATABASE_DOWN_MESSAGE);
			}
			if (err instanceof EngineBusyError) return apiError(503, 'busy', err.message);
			console.error(`[escapement] API ${event.request.method} ${event.url.pathname}:`, err);
			return apiError(500, 'internal', 'Something went wrong on our side. The error was logged.');
		}
	};
}

/** Parses a JSON body with a zod schema (a ZodError becomes a 400 with details). */
export async function readJson<T extends z.ZodType>(request: Request, schema: T): Promise<z.infer<T>> {
	let body: unknown;
	try {
		body = await request.json();
	} catch {
		throw new ZodError([{ code: 'custom', path: [], message: 'The body must be JSON (Content-Type: application/json).', input: undefined }]);
	}
	return schema.parse(body);
}

/** The signed-in person (session or token) and their access to the lab named in the URL, checked for a capability. */
export async function labFromEvent(event: RequestEvent, capability: Capability = 'read'): Promise<LabAccess> {
	const user = requireUser(event.locals);
	const slug = event.params.lab;
	if (!slug) throw new Error('api: labFromEvent needs a [lab] route parameter');
	return requireLab(user, slug, capability);
}

/** A file download: the bytes with their content type and a Content-Disposition that survives non-ASCII names. */
export function fileResponse(bytes: Uint8Array | ArrayBuffer, contentType: string, fileName: string): Response {
	const ascii = fileName.replace(/[^\x20-\x7e]/g, '_').replace(/["\\]/g, '_');
	return new Response(bytes instanceof Uint8Array ? new Uint8Array(bytes) : new Uint8Array(bytes), {
		headers: {
			'content-type': contentType,
			'content-disposition': `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(fileName)}`,
			'cache-control': 'private, no-store'
		}
	});
}

/** A revision number from the URL; anything but a positive integer answers 404 like a missing revision. */
export function revisionParam(value: string | undefined): number {
	const n = Number(value);
	if (!value || !/^\d+$/.test(value) || !Number.isSafeInteger(n) || n < 1) error(404, { message: `Revision "${value ?? ''}" does not exist; revisions are numbered 1, 2, 3, …`, code: 'not_found' });
	return n;
}

/** The start of an audit export's file name: `<scheme>-r<revision>`, without characters file systems refuse. */
export function auditFileStem(schemeName: string, revision: number): string {
	const safe = schemeName.replace(/[\\/:*?"<>|\x00-\x1f]+/g, '-').replace(/\s+/g, ' ').trim().slice(0, 120) || 'scheme';
	return `${safe}-r${revision}`;
}
