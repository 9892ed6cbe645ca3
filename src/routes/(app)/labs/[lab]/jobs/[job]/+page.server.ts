import { fail, isHttpError } from '@sveltejs/kit';
import { requireLab, requireUser, requireUserPage } from '$lib/server/access';
import { db, schema } from '$lib/server/db';
import { eq } from 'drizzle-orm';
import { cancelEngineJob, getEngineJob, jobView } from '$lib/server/jobs/engine-jobs';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const user = requireUserPage(locals, url);
	const { lab } = await requireLab(user, params.lab, 'read');
	const job = await getEngineJob(lab.id, params.job);
	const [scheme] = job.schemeId ? await db.select({ id: schema.schemes.id, name: schema.schemes.name }).from(schema.schemes).where(eq(schema.schemes.id, job.schemeId)) : [];
	const input = job.input as { revisionNumber?: number; variable?: string; points?: number };
	return { job: jobView(job, lab.slug), scheme: scheme ?? null, revision: input.revisionNumber ?? null, sweep: job.kind === 'sweep' ? { variable: input.variable, points: input.points } : null };
};

export const actions: Actions = {
	cancel: async ({ locals, params }) => {
		const access = await requireLab(requireUser(locals), params.lab, 'model');
		try {
			await cancelEngineJob(access.lab.id, params.job, access.user.id);
		} catch (err) {
			if (isHttpError(err)) return fail(err.status, { message: err.body.message });
			throw err;
		}
		return { cancelled: true };
	}
};
