import { json } from '@sveltejs/kit';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { can } from '$lib/server/access';
import { listMembers, listOpenInvitations } from '$lib/server/members';
import type { RequestHandler } from './$types';

/** The lab's members and roles; the lab lead also sees the open invitations. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const members = await listMembers(access.lab.id);
	const invitations = can(access.role, 'manage') ? await listOpenInvitations(access.lab.id) : undefined;
	return json({ members, ...(invitations ? { invitations } : {}) });
});
