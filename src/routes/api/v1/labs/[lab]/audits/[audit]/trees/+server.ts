import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiError, apiRoute, labFromEvent } from '$lib/server/api';
import { getAudit } from '$lib/server/audits';
import { TREE_MAX_STATES } from '$lib/server/audit-curves';
import { runEngine } from '$lib/server/engine-pool';
import type { RequestHandler } from './$types';

/** A malformed query answers 400 naming the parameter and what to give. */
function queryError(error: z.ZodError): Response {
	const details = error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
	return apiError(400, 'invalid', `The query is not valid: ${details.map((d) => `${d.path}: ${d.message}`).join('; ')}.`, details);
}

const treeQuery = z.object({ state: z.string({ error: 'state is required: the id of a state of the scheme, e.g. ?state=E' }).min(1) });

/**
 * The directed spanning trees of the audited scheme into one state (the diagram method), with their weights
 * (products of effective rates, s^-(n-1)), their count and the sum Σ of their weights. Schemes up to 8 states.
 */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const parsed = treeQuery.safeParse(Object.fromEntries(event.url.searchParams));
	if (!parsed.success) return queryError(parsed.error);
	const { state } = parsed.data;
	const audit = await getAudit(access.lab.id, event.params.audit);
	const states = audit.inputs.states.map((s) => s.id);
	if (states.length > TREE_MAX_STATES)
		return apiError(400, 'too_many_states', `The scheme has ${states.length} states; spanning trees are drawn only up to ${TREE_MAX_STATES} states.`, {
			states: states.length,
			limit: TREE_MAX_STATES
		});
	if (!states.includes(state))
		return apiError(400, 'invalid', `"${state}" is not a state of this scheme; use one of: ${states.join(', ')}.`, [
			{ path: 'state', message: `unknown state "${state}"` }
		]);
	return json(await runEngine('trees', { scheme: audit.inputs, stateId: state }));
});
