import type { Handle, HandleServerError, ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { authHandle } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { userFromApiToken } from '$lib/server/api-tokens';
import { startJobs, stopJobs } from '$lib/server/jobs';
import { closeDb } from '$lib/server/db';

export const init: ServerInit = async () => {
	// Fail fast with a clear message when the environment is incomplete.
	void config.databaseUrl;
	void config.authSecret;
	await startJobs();
	// adapter-node waits for the event loop to empty after SIGTERM: release the job queue and the pool so it can.
	process.once('sveltekit:shutdown', async () => {
		await stopJobs().catch(() => {});
		await closeDb().catch(() => {});
	});
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
		}
	}
	return resolve(event);
};

const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	response.headers.set('X-Content-Type-Options', 'nosniff');
	response.headers.set('Referrer-Policy', 'same-origin');
	response.headers.set('X-Frame-Options', 'DENY');
	return response;
};

export const handle = sequence(authHandle, identify, securityHeaders);

export const handleError: HandleServerError = ({ error, event, status }) => {
	if (status !== 404) console.error(`[escapement] ${event.request.method} ${event.url.pathname}:`, error);
	return { message: status === 404 ? 'Not found' : 'Something went wrong on our side. The error was logged.', code: String(status) };
};
