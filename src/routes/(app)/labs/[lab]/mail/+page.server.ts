import { requireLab, requireUserPage } from '$lib/server/access';
import { caughtMailForLab } from '$lib/server/mailbox';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const access = await requireLab(requireUserPage(locals, url), params.lab, 'manage');
	const messages = await caughtMailForLab(access.lab.id);
	const open = Number(url.searchParams.get('open') ?? messages[0]?.id ?? 0);
	return { messages, open };
};
