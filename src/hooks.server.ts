import { json, text, type Handle, type HandleServerError, type ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { authHandle } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { userFromApiToken } from '$lib/server/api-tokens';
import { startJobs, stopJobs } from '$lib/server/jobs';
import { closeDb, DATABASE_DOWN_MESSAGE, databaseDownSince, isDatabaseDown, markDatabaseDown } from '$lib/server/db';
import { closeEnginePool } from '$lib/server/engine-pool';
import { logRefusal } from '$lib/server/activity';
import { jsonTextIssues, textProblem, type InputIssue } from '$lib/server/input-guard';

export const init: ServerInit = async () => {
	// Fail fast with a clear message when the environment is incomplete.
	void config.databaseUrl;
	void config.authSecret;
	// A stray rejection (a dropped connection nobody awaited) is logged, not allowed to stop the lab's server.
	process.on('unhandledRejection', (reason) => console.error('[escapement] unhandled rejection:', reason));
	await startJobs();
	// adapter-node waits for the event loop to empty after SIGTERM: release the job queue and the pool so it can.
	process.once('sveltekit:shutdown', async () => {
		await stopJobs().catch(() => {});
		await closeEnginePool().catch(() => {});
		await closeDb().catch(() => {});
	});
};

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);
const FORM_TYPES = ['application/x-www-form-urlencoded', 'multipart/form-data', 'text/plain'];

/**
 * Cross-site request check, in place of SvelteKit's (svelte.config.js trusts every origin): a request that a browser
 * could send from another site with the person's cookies — a form body, or any body next to a cookie — must come
 * from this origin. A request with `Authorization: Bearer` carries no ambient credential (a foreign page cannot set
 * that header without a CORS preflight, which this server never grants), so scripts upload as the API docs show.
 */
const sameOrigin: Handle = async ({ event, resolve }) => {
	const { request, url } = event;
	if (SAFE_METHODS.has(request.method) || request.headers.has('authorization')) return resolve(event);
	const type = (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
	// Without a cookie only the sign-in and invitation forms matter (a planted sign-in); the API then answers 401.
	const ambient = request.headers.has('cookie') || (FORM_TYPES.includes(type) && !url.pathname.startsWith('/api/'));
	const origin = request.headers.get('origin');
	if (ambient && origin !== url.origin) {
		await logRefusal(event, 'cross-site', `Refused a ${request.method} to ${url.pathname} from ${origin ? `the origin ${origin.slice(0, 100)}` : 'an unknown origin (no Origin header)'}`);
		const message = 'Cross-site form submissions are refused; submit the form from Escapement itself, or send an API token as "Authorization: Bearer …".';
		return url.pathname.startsWith('/api/')
			? json({ error: { code: 'cross_site', message, details: null } }, { status: 403 })
			: text(message, { status: 403 });
	}
	return resolve(event);
};

/** Larger bodies are refused before they are read (rate tables are at most 10 MB; the import says so itself). */
export const MAX_BODY_BYTES = 12 * 1024 * 1024;

function refuse(event: Parameters<Handle>[0]['event'], status: number, code: string, message: string, details: unknown = null): Response {
	return event.url.pathname.startsWith('/api/')
		? json({ error: { code, message, details } }, { status })
		: text(message, { status, headers: { 'content-type': 'text/plain; charset=utf-8' } });
}

/**
 * Hostile bodies answered with a 4xx that names what is wrong, before any handler: too large (413), a multipart or
 * form body that does not parse, text with NUL, lone surrogates or bidi overrides (input-guard.ts). The body is read
 * from a clone, so the handler still reads it itself. Refusals go to the activity log.
 */
const inputGuard: Handle = async ({ event, resolve }) => {
	const { request } = event;
	if (SAFE_METHODS.has(request.method)) return resolve(event);
	const length = Number(request.headers.get('content-length') ?? 0);
	if (length > MAX_BODY_BYTES) {
		await logRefusal(event, 'too-large', `Refused a ${Math.round(length / 1024 / 1024)} MB body to ${event.url.pathname}`);
		return refuse(event, 413, 'too_large', `The request body is ${(length / 1024 / 1024).toFixed(1)} MB; the limit is ${MAX_BODY_BYTES / 1024 / 1024} MB (rate tables up to 10 MB).`);
	}
	const type = (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
	let issues: InputIssue[] = [];
	try {
		if (type === 'application/json') {
			const raw = await request.clone().text();
			if (raw.length > MAX_BODY_BYTES) return refuse(event, 413, 'too_large', `The request body is larger than ${MAX_BODY_BYTES / 1024 / 1024} MB.`);
			let parsed: unknown;
			try {
				parsed = JSON.parse(raw);
			} catch {
				parsed = undefined; // the handler answers malformed JSON itself
			}
			issues = jsonTextIssues(parsed);
		} else if (type === 'multipart/form-data' || type === 'application/x-www-form-urlencoded') {
			let form: FormData;
			try {
				form = await request.clone().formData();
			} catch (err) {
				if ((err as { status?: number }).status === 413) throw err;
				await logRefusal(event, 'malformed-form', `Refused a form body to ${event.url.pathname} that does not parse`);
				return refuse(event, 400, 'invalid', `The ${type} body cannot be read (broken boundary or encoding). Send the form again; from a script, let the HTTP library build the multipart body.`, [{ path: 'body', message: 'malformed form data' }]);
			}
			for (const [name, value] of form) {
				const fieldProblem = textProblem(name);
				if (fieldProblem) issues.push({ path: name.slice(0, 40), message: `the field name ${fieldProblem}` });
				const problem = typeof value === 'string' ? textProblem(value) : textProblem(value.name) && `the file name ${textProblem(value.name)}`;
				if (problem) issues.push({ path: name.slice(0, 40), message: problem });
			}
		}
	} catch (err) {
		if ((err as { status?: number }).status === 413) {
			await logRefusal(event, 'too-large', `Refused a body over the size limit to ${event.url.pathname}`);
			return refuse(event, 413, 'too_large', `The request body is larger than the limit (${MAX_BODY_BYTES / 1024 / 1024} MB; rate tables up to 10 MB).`);
		}
		throw err;
	}
	if (issues.length) {
		await logRefusal(event, 'hostile-text', `Refused input to ${event.url.pathname}: ${issues[0].path} ${issues[0].message.slice(0, 80)}`);
		const first = issues[0];
		return refuse(event, 400, 'invalid', `${first.path === '$' ? 'The body' : `The field ${first.path}`} ${first.message}. Nothing was saved.`, issues);
	}
	return resolve(event);
};

/** Personal API tokens (Authorization: Bearer …) identify scripts; the session cookie identifies browsers. */
const identify: Handle = async ({ event, resolve }) => {
	event.locals.user = null;
	event.locals.via = null;
	const bearer = event.request.headers.get('authorization')?.match(/^Bearer\s+(\S+)$/i)?.[1];
	if (bearer) {
		event.locals.user = await userFromApiToken(bearer);
		event.locals.via = event.locals.user ? 'token' : null;
	} else {
		const session = await event.locals.auth();
		if (session?.user?.id && session.user.email) {
			event.locals.user = { id: session.user.id, email: session.user.email, name: session.user.name ?? null };
			event.locals.via = 'session';
			event.locals.sessionId = session.sid ?? null;
		}
	}
	return resolve(event);
};

const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	// Signed-in pages and their data hold lab records: no shared or back-button cache keeps them after sign-out.
	if (event.locals.user && !response.headers.has('cache-control')) response.headers.set('cache-control', 'private, no-store');
	response.headers.set('X-Content-Type-Options', 'nosniff');
	response.headers.set('Referrer-Policy', 'same-origin');
	response.headers.set('X-Frame-Options', 'DENY');
	return response;
};

/**
 * While this process knows the database is down, every request but the health check answers 503 at once (instead of
 * waiting for a connection timeout each); a request that finds it down on its way answers 503 too, not 500.
 */
const databaseGate: Handle = async ({ event, resolve }) => {
	const isHealth = event.url.pathname === '/api/health';
	if (!isHealth && databaseDownSince() !== null) return unavailable(event.url.pathname);
	const response = await resolve(event);
	if (response.status === 500 && databaseDownSince() !== null) {
		const headers = new Headers(response.headers);
		headers.set('retry-after', '5');
		return new Response(response.body, { status: 503, headers });
	}
	return response;
};

function unavailable(pathname: string): Response {
	const headers = { 'retry-after': '5', 'cache-control': 'no-store' };
	if (pathname.startsWith('/api/'))
		return Response.json({ error: { code: 'database_unavailable', message: DATABASE_DOWN_MESSAGE, details: null } }, { status: 503, headers });
	return new Response(`<!doctype html><meta charset="utf-8"><title>Escapement: database unavailable</title><p>${DATABASE_DOWN_MESSAGE}</p>`, {
		status: 503,
		headers: { ...headers, 'content-type': 'text/html; charset=utf-8' }
	});
}

export const handle = sequence(databaseGate, sameOrigin, authHandle, identify, inputGuard, securityHeaders);

export const handleError: HandleServerError = ({ error, event, status }) => {
	if (isDatabaseDown(error)) {
		markDatabaseDown(error);
		return { message: DATABASE_DOWN_MESSAGE, code: '503' };
	}
	if (status !== 404) console.error(`[escapement] ${event.request.method} ${event.url.pathname}:`, error);
	return { message: status === 404 ? 'Not found' : 'Something went wrong on our side. The error was logged.', code: String(status) };
};
