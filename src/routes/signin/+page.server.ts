import { fail, isRedirect, redirect } from '@sveltejs/kit';
import { signIn } from '$lib/server/auth';
import { pausedMessage, signInBlockedFor } from '$lib/server/rate-limit';
import { safeNextPath } from '$lib/server/next-path';
import type { Actions, PageServerLoad } from './$types';

const MESSAGES: Record<string, string> = {
	CredentialsSignin: 'That e-mail address and password do not match an account. Check both and try again.',
	AccessDenied: 'That sign-in link cannot be used. Ask for a new one, or ask your lab lead for an invitation.',
	Verification: 'That sign-in link has expired or was already used. Ask for a new one.',
	EmailSignin: 'The sign-in link could not be sent. Try again in a moment, or sign in with your password.'
};


export const load: PageServerLoad = ({ locals, url }) => {
	const next = safeNextPath(url.searchParams.get('next') ?? url.searchParams.get('callbackUrl'));
	if (locals.user) redirect(303, next);
	const code = url.searchParams.get('error');
	return { next, message: code ? (MESSAGES[code] ?? 'Sign-in failed. Try again.') : null };
};

export const actions: Actions = {
	default: async (event) => {
		const form = await event.request.clone().formData();
		try {
			await signIn(event);
		} catch (err) {
			if (isRedirect(err)) throw err;
			// Auth.js throws on a wrong password or an unknown address for a link; answer on the page, without saying
			// which part of the credentials was wrong.
			const { type, code } = err as { type?: string; code?: string };
			if (type === 'CredentialsSignin' && code === 'paused') {
				const message = pausedMessage(await signInBlockedFor(String(form.get('email') ?? '')));
				return fail(429, { message, email: String(form.get('email') ?? '').slice(0, 254), mode: 'password' as const });
			}
			if (type && type in MESSAGES) {
				const mode = form.get('providerId') === 'email-link' ? ('link' as const) : ('password' as const);
				return fail(400, { message: MESSAGES[type], email: String(form.get('email') ?? '').slice(0, 254), mode });
			}
			throw err;
		}
	}
};
