import { labsOf, requireUserPage } from '$lib/server/access';
import type { PageServerLoad } from './$types';

/** The page is for signed-in people; their first lab's slug makes the examples ready to paste. */
export const load: PageServerLoad = async ({ locals, url }) => {
	const user = requireUserPage(locals, url);
	const labs = await labsOf(user.id);
	return { labSlug: labs[0]?.slug ?? 'kestrel', origin: url.origin };
};
