import { apiRoute, auditFileStem, fileResponse, labFromEvent } from '$lib/server/api';
import { getAudit, provenanceOf } from '$lib/server/audits';
import { auditWorkbook } from '$lib/server/sheets/export-xlsx';
import type { RequestHandler } from './$types';

/** The audit as a workbook: summary, cycles, state probabilities, step fluxes, observables, conditions, provenance. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const audit = await getAudit(access.lab.id, event.params.audit);
	const bytes = await auditWorkbook(audit.results, audit.inputs, provenanceOf(audit));
	return fileResponse(bytes, 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet', `${auditFileStem(audit.schemeName, audit.revision)}-audit.xlsx`);
});
