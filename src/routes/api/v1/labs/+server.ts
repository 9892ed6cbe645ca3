import { json } from '@sveltejs/kit';
import { apiRoute } from '$lib/server/api';
import { labsOf, requireUser, ROLE_LABELS } from '$lib/server/access';
import type { RequestHandler } from './$types';

/** The labs of the signed-in person, with their role in each. */
export const GET: RequestHandler = apiRoute(async ({ locals }) => {
	const user = requireUser(locals);
	const labs = await labsOf(user.id);
	return json({ labs: labs.map((l) => ({ slug: l.slug, name: l.name, role: l.role, roleLabel: ROLE_LABELS[l.role] })) });
});
