import { json } from '@sveltejs/kit';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { can, ROLE_LABELS } from '$lib/server/access';
import type { RequestHandler } from './$types';

/** One lab and what the signed-in person may do in it. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const { lab, role } = await labFromEvent(event, 'read');
	return json({
		lab: { slug: lab.slug, name: lab.name, createdAt: lab.createdAt },
		role,
		roleLabel: ROLE_LABELS[role],
		may: { model: can(role, 'model'), review: can(role, 'review'), manage: can(role, 'manage') }
	});
});
