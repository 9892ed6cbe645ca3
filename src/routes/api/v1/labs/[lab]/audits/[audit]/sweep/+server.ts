import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiError, apiRoute, labFromEvent } from '$lib/server/api';
import { getAuditSummary } from '$lib/server/audits';
import { requestSweep } from '$lib/server/jobs/sweep-job';
import { jobView } from '$lib/server/jobs/engine-jobs';
import { SWEEP_MAX_POINTS, speciesOf } from '$lib/server/audit-curves';
import type { RequestHandler } from './$types';

/** A malformed query answers 400 naming the parameter and what to give. */
function queryError(error: z.ZodError): Response {
	const details = error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
	return apiError(400, 'invalid', `The query is not valid: ${details.map((d) => `${d.path}: ${d.message}`).join('; ')}.`, details);
}

const number = (what: string) =>
	z.coerce.number({ error: `${what} must be a number` }).refine(Number.isFinite, { error: `${what} must be a finite number` });

const sweepQuery = z
	.object({
		variable: z.string({ error: 'variable is required: "force" or the name of a species in the scheme, e.g. "ATP"' }).min(1),
		from: number('from'),
		to: number('to'),
		points: z.coerce
			.number({ error: 'points must be a whole number' })
			.int({ error: 'points must be a whole number' })
			.min(2, { error: 'points must be at least 2' })
			.max(SWEEP_MAX_POINTS, { error: `points may be at most ${SWEEP_MAX_POINTS}` })
			.default(41)
	})
	.refine((q) => q.from < q.to, { error: 'from must be smaller than to', path: ['to'] });

/**
 * Velocity of the audited scheme against the load (variable=force, pN, even spacing) or against one species'
 * concentration (variable=ATP etc., M, log spacing), every other condition as stored; with the stall force at the
 * stored conditions (null when the velocity does not change sign within ±1000 pN). Past the work budget (many points
 * on a large scheme) it answers 202 with a job instead; the job's url gives the same document when it is done.
 */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const parsed = sweepQuery.safeParse(Object.fromEntries(event.url.searchParams));
	if (!parsed.success) return queryError(parsed.error);
	const query = parsed.data;
	const audit = await getAuditSummary(access.lab.id, event.params.audit);
	const scheme = audit.inputs;
	const isForce = query.variable === 'force';
	if (!isForce) {
		const species = speciesOf(scheme);
		if (!species.includes(query.variable))
			return apiError(
				400,
				'invalid',
				`"${query.variable}" is not a species of this scheme; use variable=force or one of: ${species.join(', ') || '(the scheme has no species)'}.`,
				[{ path: 'variable', message: `unknown species "${query.variable}"` }]
			);
		if (query.from <= 0 || query.to >= 100)
			return apiError(400, 'invalid', 'Concentrations are swept on a log scale: give from > 0 and to < 100 M (e.g. from=1e-7&to=1e-2).', [
				{ path: query.from <= 0 ? 'from' : 'to', message: 'out of range for a concentration in M' }
			]);
	} else if (query.from < -1000 || query.to > 1000) {
		return apiError(400, 'invalid', 'Loads are swept between −1000 and 1000 pN; narrow from and to.', [
			{ path: query.from < -1000 ? 'from' : 'to', message: 'out of range for a load in pN' }
		]);
	}
	const outcome = await requestSweep(access, audit, { variable: query.variable, from: query.from, to: query.to, points: query.points });
	if (outcome.job) {
		// past the work budget: a job computes the curve; its url reports progress and, when done, the points
		const job = jobView(outcome.job, access.lab.slug);
		return json({ job }, { status: 202, headers: { location: job.url } });
	}
	const { points, stallForcePN } = outcome.result;
	return json({
		variable: query.variable,
		unit: isForce ? 'pN' : 'M',
		scale: isForce ? 'linear' : 'log',
		points,
		stallForcePN,
		conditions: { temperatureK: scheme.temperatureK, forcePN: scheme.forcePN, concentrationsM: scheme.concentrationsM }
	});
});
