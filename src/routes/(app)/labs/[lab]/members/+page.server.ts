import { fail, isHttpError } from '@sveltejs/kit';
import { z } from 'zod';
import { requireLab, requireUserPage, requireUser, can } from '$lib/server/access';
import { changeRole, invite, listMembers, listOpenInvitations, removeMember } from '$lib/server/members';
import { labRole } from '$lib/server/db/schema';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const access = await requireLab(requireUserPage(locals, url), params.lab, 'read');
	const manage = can(access.role, 'manage');
	return {
		members: await listMembers(access.lab.id),
		invitations: manage ? await listOpenInvitations(access.lab.id) : [],
		manage,
		me: access.user.id
	};
};

const inviteInput = z.object({ email: z.email({ error: 'Give a valid e-mail address.' }), role: z.enum(labRole.enumValues) });
const roleInput = z.object({ userId: z.string().min(1), role: z.enum(labRole.enumValues) });

/** Runs a service call and turns its HTTP errors into a form failure shown on the page. */
async function attempt(action: string, fn: () => Promise<unknown>) {
	try {
		await fn();
		return null;
	} catch (err) {
		if (isHttpError(err)) return fail(err.status, { action, ok: false, message: err.body.message });
		throw err;
	}
}

export const actions: Actions = {
	invite: async ({ locals, params, request }) => {
		const access = await requireLab(requireUser(locals), params.lab, 'manage');
		const parsed = inviteInput.safeParse(Object.fromEntries(await request.formData()));
		if (!parsed.success) return fail(400, { action: 'invite', ok: false, message: parsed.error.issues[0].message });
		return (await attempt('invite', () => invite(access, parsed.data.email, parsed.data.role))) ?? { action: 'invite', ok: true, message: `Invitation sent to ${parsed.data.email}.` };
	},
	role: async ({ locals, params, request }) => {
		const access = await requireLab(requireUser(locals), params.lab, 'manage');
		const parsed = roleInput.safeParse(Object.fromEntries(await request.formData()));
		if (!parsed.success) return fail(400, { action: 'role', ok: false, message: 'Choose a role.' });
		return (await attempt('role', () => changeRole(access, parsed.data.userId, parsed.data.role))) ?? { action: 'role', ok: true, message: 'Role changed.' };
	},
	remove: async ({ locals, params, request }) => {
		const access = await requireLab(requireUser(locals), params.lab, 'manage');
		const userId = String((await request.formData()).get('userId') ?? '');
		return (await attempt('remove', () => removeMember(access, userId))) ?? { action: 'remove', ok: true, message: 'Member removed.' };
	}
};
