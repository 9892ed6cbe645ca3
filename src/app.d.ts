// See https://svelte.dev/docs/kit/types#app.d.ts
import type { DefaultSession } from '@auth/sveltekit';

declare global {
	namespace App {
		interface Error {
			message: string;
			code?: string;
		}
		interface Locals {
			/** The signed-in person, from the session cookie or a personal API token; null when anonymous. */
			user: { id: string; email: string; name: string | null } | null;
			/** How the person was identified: the browser session or an API token. */
			via: 'session' | 'token' | null;
			/** The server-side session of a browser request (revoked at sign-out). */
			sessionId?: string | null;
		}
	}
}

declare module '@auth/sveltekit' {
	interface Session {
		user: { id: string } & DefaultSession['user'];
		/** The server-side session (user_sessions.id) the cookie names. */
		sid?: string;
	}
}

export {};
