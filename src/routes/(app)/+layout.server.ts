import { labsOf, requireUserPage } from '$lib/server/access';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals, url }) => {
	const user = requireUserPage(locals, url);
	return { user, labs: await labsOf(user.id) };
};
