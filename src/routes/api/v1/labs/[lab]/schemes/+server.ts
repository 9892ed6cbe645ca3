import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiError, apiRoute, labFromEvent, readJson } from '$lib/server/api';
import { createScheme, listSchemes, SCHEME_SORTS } from '$lib/server/schemes';
import { importRateTable } from '$lib/server/sheets';
import type { RequestHandler } from './$types';

const listQuery = z.object({
	q: z.string().trim().max(200).optional(),
	sort: z.enum(SCHEME_SORTS).optional(),
	dir: z.enum(['asc', 'desc']).optional(),
	page: z.coerce.number().int().min(1).max(100_000, 'page must be at most 100000').optional(),
	pageSize: z.coerce.number().int().min(1).max(100).optional()
});

/** The lab's schemes: search by name or description, sort, paginate. */
export const GET: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'read');
	const query = listQuery.parse(Object.fromEntries(event.url.searchParams));
	const list = await listSchemes(access.lab.id, { ...query, q: query.q || undefined });
	return json({ schemes: list.rows, total: list.total, page: list.page, pageSize: list.pageSize, pages: list.pages });
});

const createBody = z.object({
	name: z.string().trim().min(1).max(200).optional(),
	description: z.string().max(4000).optional(),
	note: z.string().max(2000).optional(),
	scheme: z.unknown().refine((v) => v !== undefined, 'Give the scheme document (format "escapement.scheme/1").')
});

const SHEET_TYPES: Record<string, string> = {
	xlsx: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
	xlsm: 'application/vnd.ms-excel.sheet.macroEnabled.12',
	csv: 'text/csv',
	tsv: 'text/tab-separated-values',
	txt: 'text/plain'
};

/**
 * A new scheme, from a JSON body `{ name?, description?, scheme }` or from an uploaded rate table
 * (multipart/form-data with `file`, optional `name` and `description`). The uploaded file is kept with revision 1.
 */
export const POST: RequestHandler = apiRoute(async (event) => {
	const access = await labFromEvent(event, 'model');
	const type = event.request.headers.get('content-type') ?? '';
	if (type.startsWith('multipart/form-data')) {
		const form = await event.request.formData();
		const file = form.get('file');
		if (!(file instanceof File) || file.size === 0)
			return apiError(400, 'invalid', 'Attach the rate table as the form field "file" (an .xlsx workbook or a .csv file).', [{ path: 'file', message: 'missing or empty' }]);
		const bytes = new Uint8Array(await file.arrayBuffer());
		const imported = await importRateTable(bytes, file.name);
		if (!imported.ok)
			return apiError(
				422,
				'invalid_sheet',
				`The rate table has ${imported.errors.length} problem${imported.errors.length === 1 ? '' : 's'}; see details for the sheet, row and column of each. Nothing was saved.`,
				imported.errors
			);
		const ext = /\.([A-Za-z0-9]+)$/.exec(file.name)?.[1]?.toLowerCase() ?? '';
		const text = (key: string) => {
			const v = form.get(key);
			return typeof v === 'string' && v.trim() ? v.trim() : undefined;
		};
		const created = await createScheme(access, {
			name: text('name'),
			description: text('description'),
			scheme: imported.scheme,
			note: text('note') ?? `Uploaded from ${file.name}`,
			source: { fileName: file.name, bytes, contentType: SHEET_TYPES[ext] ?? 'application/octet-stream' }
		});
		return json({ scheme: created.scheme, revision: created.revision, warnings: imported.warnings }, { status: 201 });
	}
	const body = await readJson(event.request, createBody);
	const created = await createScheme(access, body);
	return json({ scheme: created.scheme, revision: created.revision, warnings: [] }, { status: 201 });
});
