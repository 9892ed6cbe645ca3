import { requireLab, requireUserPage } from '$lib/server/access';
import { activityForLab } from '$lib/server/mailbox';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const access = await requireLab(requireUserPage(locals, url), params.lab, 'manage');
	const page = Number(url.searchParams.get('page') ?? 1) || 1;
	return await activityForLab(access.lab.id, { page });
};
