import { requireLab, requireUserPage, can } from '$lib/server/access';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals, params, url }) => {
	const user = requireUserPage(locals, url);
	const { lab, role } = await requireLab(user, params.lab);
	return {
		lab: { id: lab.id, slug: lab.slug, name: lab.name },
		role,
		may: { model: can(role, 'model'), review: can(role, 'review'), manage: can(role, 'manage') }
	};
};
