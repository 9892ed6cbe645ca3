import { fail } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { labsOf, requireUserPage } from '$lib/server/access';
import { createApiToken, listApiTokens, revokeApiToken } from '$lib/server/api-tokens';
import { db, schema } from '$lib/server/db';
import { hashPassword, MIN_PASSWORD_LENGTH, verifyPassword } from '$lib/server/passwords';
import type { Actions, PageServerLoad } from './$types';

const MAX_LIVE_TOKENS = 20;

export const load: PageServerLoad = async ({ locals, url }) => {
	const user = requireUserPage(locals, url);
	const [labs, tokens] = await Promise.all([labsOf(user.id), listApiTokens(user.id)]);
	return { person: { name: user.name, email: user.email }, labs, tokens, minPasswordLength: MIN_PASSWORD_LENGTH };
};

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
		const name = tokenName.safeParse((await request.formData()).get('name') ?? '');
		if (!name.success) return fail(400, { form: 'token' as const, error: name.error.issues[0].message });
		const live = (await listApiTokens(user.id)).filter((t) => !t.revokedAt).length;
		if (live >= MAX_LIVE_TOKENS) return fail(400, { form: 'token' as const, error: `You have ${live} live tokens; revoke one you no longer use first.` });
		const { token } = await createApiToken(user.id, name.data);
		return { form: 'token' as const, created: { name: name.data, token } };
	},

	revokeToken: async ({ locals, url, request }) => {
		const user = requireUserPage(locals, url);
		const id = String((await request.formData()).get('id') ?? '');
		if (!(await revokeApiToken(user.id, id))) return fail(404, { form: 'revoke' as const, error: 'No such live token of yours; it may already be revoked.' });
		return { form: 'revoke' as const, revoked: true };
	},

	changePassword: async ({ locals, url, request }) => {
		const user = requireUserPage(locals, url);
		const form = await request.formData();
		const parsed = passwordForm.safeParse({ current: form.get('current') ?? '', next: form.get('next') ?? '', confirm: form.get('confirm') ?? '' });
		if (!parsed.success) return fail(400, { form: 'password' as const, error: parsed.error.issues[0].message });
		const [me] = await db.select({ passwordHash: schema.users.passwordHash }).from(schema.users).where(eq(schema.users.id, user.id));
		if (!(await verifyPassword(parsed.data.current, me?.passwordHash))) return fail(400, { form: 'password' as const, error: 'Your current password is not right.' });
		await db.update(schema.users).set({ passwordHash: await hashPassword(parsed.data.next) }).where(eq(schema.users.id, user.id));
		return { form: 'password' as const, changed: true };
	}
};
