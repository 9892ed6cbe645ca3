import { can, requireLab, requireUserPage } from '$lib/server/access';
import { recentlySigned, reviewQueue } from '$lib/server/reviews';
import type { Verdict } from '$lib/engine';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const user = requireUserPage(locals, url);
	const { lab, role } = await requireLab(user, params.lab, 'read');
	const [waiting, signed] = await Promise.all([reviewQueue(lab.id), recentlySigned(lab.id, 20)]);
	return {
		waiting: waiting.map((a) => ({
			...a,
			verdictCounts: a.verdictCounts as Record<Verdict, number>,
			verdict: a.verdict as Verdict,
			isMine: a.createdBy === user.id
		})),
		signed,
		mayReview: can(role, 'review')
	};
};
