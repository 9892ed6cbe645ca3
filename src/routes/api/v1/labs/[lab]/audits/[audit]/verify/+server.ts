import { json } from '@sveltejs/kit';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { getAudit, verifyAudit } from '$lib/server/audits';
import type { RequestHandler } from './$types';

/** Recomputes the audit's SHA-256 from its stored inputs and results and compares it with the stored and signed hashes. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const audit = await getAudit(access.lab.id, event.params.audit);
	return json({ auditId: audit.id, status: audit.status, ...(await verifyAudit(audit)) });
});
