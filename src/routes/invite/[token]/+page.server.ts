import { fail, isHttpError, redirect } from '@sveltejs/kit';
import { acceptInvitation, findInvitation } from '$lib/server/members';
import { ROLE_LABELS } from '$lib/server/access';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params, locals }) => {
	const found = await findInvitation(params.token);
	if (!found) return { invitation: null };
	return {
		invitation: { email: found.invitation.email, role: ROLE_LABELS[found.invitation.role], labName: found.labName, hasAccount: found.hasAccount },
		signedInAs: locals.user?.email ?? null
	};
};

export const actions: Actions = {
	default: async ({ params, locals, request }) => {
		const form = await request.formData();
		let labSlug: string;
		try {
			({ labSlug } = await acceptInvitation(params.token, {
				signedInUserId: locals.user?.id ?? null,
				name: String(form.get('name') ?? ''),
				password: String(form.get('password') ?? '')
			}));
		} catch (err) {
			if (isHttpError(err)) return fail(err.status, { message: err.body.message });
			throw err;
		}
		redirect(303, locals.user ? `/labs/${labSlug}` : `/signin?next=/labs/${labSlug}`);
	}
};
