import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiRoute, labFromEvent, readJson } from '$lib/server/api';
import { conditionsInput, listAudits } from '$lib/server/audits';
import { requestAudit } from '$lib/server/jobs/audit-job';
import { jobView } from '$lib/server/jobs/engine-jobs';
import type { RequestHandler } from './$types';

/** The stored audits of a scheme, newest first. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	return json({ audits: await listAudits(access.lab.id, event.params.scheme) });
});

const auditBody = z.object({ revision: z.number().int().min(1).optional(), conditions: conditionsInput.optional() }).strict();

/**
 * Runs and stores an audit of a revision (the newest by default) at the given conditions: 201 with the audit, or,
 * past the work budget, 202 with the job that will store it (poll its url for progress; its auditUrl when done).
 */
export const POST: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'model');
	// An empty body means the newest revision at its own conditions.
	const raw = await event.request.text();
	const body = raw.trim() === '' ? {} : await readJson(new Request(event.request.url, { method: 'POST', body: raw }), auditBody);
	const outcome = await requestAudit(access, event.params.scheme, body);
	if (outcome.job) {
		const job = jobView(outcome.job, access.lab.slug);
		return json({ job }, { status: 202, headers: { location: job.url } });
	}
	const audit = outcome.audit;
	return json(
		{
			audit: {
				id: audit.id,
				schemeId: audit.schemeId,
				status: audit.status,
				sha256: audit.sha256,
				engineVersion: audit.engineVersion,
				verdict: audit.verdict,
				verdictCounts: audit.verdictCounts,
				createdAt: audit.createdAt,
				url: `/api/v1/labs/${access.lab.slug}/audits/${audit.id}`
			}
		},
		{ status: 201 }
	);
});
