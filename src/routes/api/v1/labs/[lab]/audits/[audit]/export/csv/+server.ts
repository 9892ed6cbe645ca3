import { z } from 'zod';
import { apiRoute, auditFileStem, fileResponse, labFromEvent } from '$lib/server/api';
import { getAudit } from '$lib/server/audits';
import { auditCsv } from '$lib/server/sheets/export-csv';
import type { RequestHandler } from './$types';

const csvQuery = z.object({
	table: z.enum(['cycles', 'states', 'steps', 'observables'], { error: 'table must be one of cycles, states, steps, observables' })
});

/** One table of the audit as CSV (UTF-8, formula-safe). */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const { table } = csvQuery.parse({ table: event.url.searchParams.get('table') ?? undefined });
	const audit = await getAudit(access.lab.id, event.params.audit);
	const text = auditCsv(audit.results, table);
	return fileResponse(new TextEncoder().encode(text), 'text/csv; charset=utf-8', `${auditFileStem(audit.schemeName, audit.revision)}-${table}.csv`);
});
