import { fail } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { labsOf, requireUserPage } from '$lib/server/access';
import { createApiToken, listApiTokens, revokeApiToken } from '$lib/server/api-tokens';
import { db, schema } from '$lib/server/db';
import { hashPassword, MIN_PASSWORD_LENGTH } from '$lib/server/passwords';
import { checkPassword, pausedMessage } from '$lib/server/rate-limit';
import { endOtherSessions } from '$lib/server/sessions';
import type { Actions, PageServerLoad } from './$types';

const MAX_LIVE_TOKENS = 20;

export const load: PageServerLoad = async ({ locals, url }) => {
	const user = requireUserPage(locals, url);
	const [labs, tokens] = await Promise.all([labsOf(user.id), listApiTokens(user.id)]);
	const now = Date.now();
	const marked = tokens.map((t) => ({ ...t, expired: Boolean(t.expiresAt && t.expiresAt.getTime() <= now) }));
	return { person: { name: user.name, email: user.email }, labs, tokens: marked, minPasswordLength: MIN_PASSWORD_LENGTH };
};

const tokenLifetime = z.enum(['30', '90', '365', 'never'], { error: 'Choose how long the token stays valid: 30, 90 or 365 days, or until revoked.' });
const tokenName = z.string().trim().min(1, 'Give the token a name, e.g. the script or machine that will use it.').max(80, 'Keep the name under 80 characters.');
const passwordForm = z
	.object({
		current: z.string().min(1, 'Enter your current password.'),
		next: z.string().min(MIN_PASSWORD_LENGTH, `The new password needs at least ${MIN_PASSWORD_LENGTH} characters.`).max(200),
		confirm: z.string()
	})
	.refine((v) => v.next === v.confirm, { message: 'The two new passwords differ; type the same one twice.', path: ['confirm'] });

export const actions: Actions = {
	createToken: async ({ locals, url, request }) => {
		const user = requireUserPage(locals, url);
		const data = await request.formData();
		const name = tokenName.safeParse(data.get('name') ?? '');
		if (!name.success) return fail(400, { form: 'token' as const, error: name.error.issues[0].message });
		const lifetime = tokenLifetime.safeParse(data.get('lifetime') ?? 'never');
		if (!lifetime.success) return fail(400, { form: 'token' as const, error: lifetime.error.issues[0].message });
		const live = (await listApiTokens(user.id)).filter((t) => !t.revokedAt && !(t.expiresAt && t.expiresAt.getTime() <= Date.now())).length;
		if (live >= MAX_LIVE_TOKENS) return fail(400, { form: 'token' as const, error: `You have ${live} live tokens; revoke one you no longer use first.` });
		const { token } = await createApiToken(user.id, name.data, lifetime.data === 'never' ? null : Number(lifetime.data));
		return { form: 'token' as const, created: { name: name.data, token } };
	},

	revokeToken: async ({ locals, url, request }) => {
		const user = requireUserPage(locals, url);
		const id = String((await request.formData()).get('id') ?? '');
		if (!(await revokeApiToken(user.id, id))) return fail(404, { form: 'revoke' as const, error: 'No such live token of yours; it may already be revoked.' });
		return { form: 'revoke' as const, revoked: true };
	},

	changePassword: async ({ locals, url, request }) => {
		// Every wrong current password counts against the same pause as failed sign-ins (a stolen session must not guess).
		const user = requireUserPage(locals, url);
		const form = await request.formData();
		const parsed = passwordForm.safeParse({ current: form.get('current') ?? '', next: form.get('next') ?? '', confirm: form.get('confirm') ?? '' });
		if (!parsed.success) return fail(400, { form: 'password' as const, error: parsed.error.issues[0].message });
		const [me] = await db.select({ passwordHash: schema.users.passwordHash, email: schema.users.email }).from(schema.users).where(eq(schema.users.id, user.id));
		const check = await checkPassword({ email: me?.email ?? user.email, userId: user.id, passwordHash: me?.passwordHash }, parsed.data.current, 'password-change');
		if (!check.ok && check.waitSeconds > 0) return fail(429, { form: 'password' as const, error: pausedMessage(check.waitSeconds) });
		if (!check.ok) return fail(400, { form: 'password' as const, error: 'Your current password is not right.' });
		await db.update(schema.users).set({ passwordHash: await hashPassword(parsed.data.next) }).where(eq(schema.users.id, user.id));
		// Whoever else holds a session of this person (a copied cookie, another browser) is signed out.
		const ended = await endOtherSessions(user.id, locals.sessionId ?? null);
		return { form: 'password' as const, changed: true, endedSessions: ended };
	}
};
