import { json } from '@sveltejs/kit';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { adoptCorrection } from '$lib/server/audits';
import type { RequestHandler } from './$types';

/** Saves the audit's correction proposal as a new revision of its scheme (the audit itself does not change). */
export const POST: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'model');
	const { revision } = await adoptCorrection(access, event.params.audit);
	return json({ revision }, { status: 201 });
});
