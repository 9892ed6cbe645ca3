import { apiRoute, fileResponse } from '$lib/server/api';
import { requireUser } from '$lib/server/access';
import { writeTemplate } from '$lib/server/sheets';
import type { RequestHandler } from './$types';

/** The rate-table template workbook, with a filled-in invented example. */
export const GET: RequestHandler = apiRoute(async ({ locals }) => {
	requireUser(locals);
	return fileResponse(await writeTemplate(), 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet', 'escapement-rate-table-template.xlsx');
});
