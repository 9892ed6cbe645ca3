import { requireLab, requireUserPage } from '$lib/server/access';
import { writeTemplate } from '$lib/server/sheets';
import type { RequestHandler } from './$types';

/** The rate-table template workbook (empty sheets to fill plus the invented example). */
export const GET: RequestHandler = async ({ locals, params, url }) => {
	const user = requireUserPage(locals, url);
	await requireLab(user, params.lab, 'read');
	const bytes = await writeTemplate();
	return new Response(bytes as BodyInit, {
		headers: {
			'content-type': 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
			'content-disposition': 'attachment; filename="escapement-rate-table.xlsx"',
			'content-length': String(bytes.byteLength),
			'cache-control': 'private, no-store'
		}
	});
};
