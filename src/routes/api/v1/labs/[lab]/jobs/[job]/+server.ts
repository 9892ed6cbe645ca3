import { json } from '@sveltejs/kit';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { getEngineJob, jobView } from '$lib/server/jobs/engine-jobs';
import { sweepJobResult } from '$lib/server/jobs/sweep-job';
import type { RequestHandler } from './$types';

/**
 * An engine job of the lab (an audit or a sweep past the work budget): status, progress (0…1) and stage, for
 * polling; when an audit job is done, auditId and auditUrl; when a sweep job is done, its result.
 */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const job = await getEngineJob(access.lab.id, event.params.job);
	return json({ job: { ...jobView(job, access.lab.slug), result: await sweepJobResult(job) } }, { headers: { 'cache-control': 'no-store' } });
});
