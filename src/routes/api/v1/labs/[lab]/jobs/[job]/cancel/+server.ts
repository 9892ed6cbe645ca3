import { json } from '@sveltejs/kit';
import { apiRoute, labFromEvent } from '$lib/server/api';
import { cancelEngineJob, jobView } from '$lib/server/jobs/engine-jobs';
import type { RequestHandler } from './$types';

/** Cancels a job that is waiting or running (modellers and leads); a running one stops within about a second. 409 once finished. */
export const POST: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'model');
	const job = await cancelEngineJob(access.lab.id, event.params.job, access.user.id);
	return json({ job: jobView(job, access.lab.slug) });
});
