import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiError, apiRoute, labFromEvent } from '$lib/server/api';
import { auditCycleTable } from '$lib/server/audit-cycles';
import { CYCLE_PAGE_MAX, CYCLE_SORTS, CYCLE_VERDICTS, cyclePage } from '$lib/audit-cycles';
import type { RequestHandler } from './$types';

const whole = (what: string) => z.coerce.number({ error: `${what} must be a whole number` }).int({ error: `${what} must be a whole number` });

const cyclesQuery = z
	.object({
		verdict: z.enum(['all', ...CYCLE_VERDICTS], { error: `verdict must be all or one of: ${CYCLE_VERDICTS.join(', ')}` }).default('all'),
		sort: z.enum(CYCLE_SORTS, { error: `sort must be one of: ${CYCLE_SORTS.join(', ')}` }).default('z'),
		dir: z.enum(['asc', 'desc'], { error: 'dir must be asc or desc' }).optional(),
		page: whole('page').min(1, { error: 'page starts at 1' }).default(1),
		pageSize: whole('pageSize')
			.min(1, { error: 'pageSize must be at least 1' })
			.max(CYCLE_PAGE_MAX, { error: `pageSize may be at most ${CYCLE_PAGE_MAX}` })
			.default(50),
		cycle: whole('cycle').min(0, { error: 'cycle is an index from 0' }).optional()
	})
	.strict();

/**
 * One page of an audit's listed cycles, filtered by verdict and sorted on the server the same way the audit page
 * sorts them: `rows` are `{ index, cycle, zScore, affinityKT }`, `total` counts the cycles that pass the filter and
 * `counts` the listed cycles of each verdict. `cycle=<index>` answers the page that holds that cycle instead of `page`.
 */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const parsed = cyclesQuery.safeParse(Object.fromEntries(event.url.searchParams));
	if (!parsed.success) {
		const details = parsed.error.issues.map((i) => ({
			path: i.path.join('.') || 'query',
			message: i.code === 'unrecognized_keys' ? `unknown parameter(s) ${i.keys.join(', ')}; use verdict, sort, dir, page, pageSize, cycle` : i.message
		}));
		return apiError(400, 'invalid', `The query is not valid: ${details.map((d) => `${d.path}: ${d.message}`).join('; ')}.`, details);
	}
	const query = parsed.data;
	const table = await auditCycleTable(access.lab.id, event.params.audit);
	if (query.cycle !== undefined) {
		const chosen = table.rows[query.cycle];
		if (!chosen)
			return apiError(400, 'invalid', `cycle ${query.cycle} is not listed: this audit lists cycles 0 to ${table.rows.length - 1}.`, [{ path: 'cycle', message: 'out of range' }]);
		if (query.verdict !== 'all' && chosen.cycle.verdict !== query.verdict)
			return apiError(400, 'invalid', `cycle ${query.cycle} is ${chosen.cycle.verdict}, so the filter verdict=${query.verdict} hides it; use verdict=all or verdict=${chosen.cycle.verdict}.`, [
				{ path: 'cycle', message: 'hidden by the verdict filter' }
			]);
	}
	// without dir, each key's natural order: lengths shortest first, deviations and fluxes largest first
	const descending = (query.dir ?? (query.sort === 'length' ? 'asc' : 'desc')) === 'desc';
	const page = cyclePage(table.rows, { verdict: query.verdict, sort: query.sort, descending, page: query.page, pageSize: query.pageSize, cycle: query.cycle });
	return json({ ...page, verdict: query.verdict, sort: query.sort, dir: descending ? 'desc' : 'asc' });
});
