import { fail, isHttpError, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { requireLab, requireUser, requireUserPage } from '$lib/server/access';
import { createScheme, SchemeInputError } from '$lib/server/schemes';
import { importRateTable, LIMITS, type SheetIssue } from '$lib/server/sheets';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const user = requireUserPage(locals, url);
	await requireLab(user, params.lab, 'model');
	return { maxMegabytes: LIMITS.fileBytes / 1024 / 1024 };
};

const meta = z.object({
	name: z.string().trim().max(200, { error: 'Keep the name under 200 characters.' }),
	description: z.string().trim().max(4000, { error: 'Keep the description under 4000 characters.' })
});

const CONTENT_TYPES: Record<string, string> = {
	xlsx: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
	xlsm: 'application/vnd.ms-excel.sheet.macroEnabled.12',
	csv: 'text/csv',
	tsv: 'text/tab-separated-values',
	txt: 'text/plain'
};

function metaOf(form: FormData) {
	return meta.safeParse({ name: String(form.get('name') ?? ''), description: String(form.get('description') ?? '') });
}

/** createScheme's refusals (a name already used, a role too small) as form failures instead of an error page. */
function refused(err: unknown, form: 'upload' | 'empty', extra: Record<string, unknown>) {
	if (isHttpError(err)) return fail(err.status, { form, ...extra, message: err.body.message });
	if (err instanceof SchemeInputError) return fail(err.status, { form, ...extra, message: err.message, issues: err.issues });
	throw err;
}

export const actions: Actions = {
	upload: async ({ locals, params, request }) => {
		const access = await requireLab(requireUser(locals), params.lab, 'model');
		const form = await request.formData();
		const file = form.get('sheet');
		const m = metaOf(form);
		const name = m.success ? m.data.name : '';
		const description = m.success ? m.data.description : '';
		if (!m.success) return fail(400, { form: 'upload' as const, name, description, message: m.error.issues[0].message });
		if (!(file instanceof File) || file.size === 0 || !file.name)
			return fail(400, { form: 'upload' as const, name, description, message: 'Choose a rate table (.xlsx or .csv) to upload, or drop it on the box.' });
		const fileName = file.name.replace(/^.*[\\/]/, '').slice(0, 200);
		if (file.size > LIMITS.fileBytes) {
			const errors: SheetIssue[] = [{ sheet: fileName, row: null, column: null, message: `The file is ${(file.size / 1024 / 1024).toFixed(1)} MB; the limit is ${LIMITS.fileBytes / 1024 / 1024} MB. Remove unused sheets or save the steps alone as CSV.` }];
			return fail(400, { form: 'upload' as const, name, description, fileName, errors, warnings: [] as SheetIssue[] });
		}
		const bytes = new Uint8Array(await file.arrayBuffer());
		const imported = await importRateTable(bytes, fileName);
		if (!imported.ok) return fail(400, { form: 'upload' as const, name, description, fileName, errors: imported.errors, warnings: imported.warnings });

		const ext = /\.([A-Za-z0-9]+)$/.exec(fileName)?.[1]?.toLowerCase() ?? '';
		const contentType = CONTENT_TYPES[ext] ?? (file.type || 'application/octet-stream');
		const fallbackName = imported.scheme.name || fileName.replace(/\.[^.]+$/, '');
		let created;
		try {
			created = await createScheme(access, {
				name: name || fallbackName,
				description,
				scheme: imported.scheme,
				source: { fileName, bytes, contentType },
				note: `Imported from ${fileName}`
			});
		} catch (err) {
			return refused(err, 'upload', { name, description, fileName, warnings: imported.warnings });
		}
		const href = `/labs/${params.lab}/schemes/${created.scheme.id}`;
		if (imported.warnings.length === 0) redirect(303, href);
		return { form: 'upload' as const, saved: { href, name: created.scheme.name, fileName }, warnings: imported.warnings };
	},

	empty: async ({ locals, params, request }) => {
		const access = await requireLab(requireUser(locals), params.lab, 'model');
		const form = await request.formData();
		const m = metaOf(form);
		const name = m.success ? m.data.name : '';
		const description = m.success ? m.data.description : '';
		if (!m.success) return fail(400, { form: 'empty' as const, name, description, message: m.error.issues[0].message });
		if (!name) return fail(400, { form: 'empty' as const, name, description, message: 'Give the new scheme a name.' });
		let document: unknown;
		try {
			document = JSON.parse(String(form.get('scheme') ?? ''));
		} catch {
			return fail(400, { form: 'empty' as const, name, description, message: 'The tables could not be read. Reload the page and try again.' });
		}
		if (typeof document === 'object' && document !== null && !Array.isArray(document) && !(document as { name?: string }).name) (document as { name: string }).name = name;
		let created;
		try {
			created = await createScheme(access, { name, description, scheme: document, note: 'Started in the browser' });
		} catch (err) {
			return refused(err, 'empty', { name, description });
		}
		redirect(303, `/labs/${params.lab}/schemes/${created.scheme.id}`);
	}
};
