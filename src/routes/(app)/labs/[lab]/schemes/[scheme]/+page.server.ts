import { fail, isHttpError, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { can, requireLab, requireUser, requireUserPage } from '$lib/server/access';
import { conditionsInput, listAudits, previewAudit, runAudit } from '$lib/server/audits';
import { getScheme, listRevisions, saveRevision, SchemeInputError } from '$lib/server/schemes';
import { EngineError, type Audit } from '$lib/engine';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const user = requireUserPage(locals, url);
	const { lab, role } = await requireLab(user, params.lab, 'read');
	const scheme = await getScheme(lab.id, params.scheme);
	const [revisions, audits] = await Promise.all([listRevisions(lab.id, params.scheme), listAudits(lab.id, params.scheme)]);
	let preview: Audit | null = null;
	let previewError: string | null = null;
	try {
		preview = (await previewAudit(scheme.latest.scheme)).results;
	} catch (err) {
		if (!(err instanceof EngineError)) throw err;
		previewError = err.message;
	}
	const latest = revisions.find((r) => r.number === scheme.latest.number);
	return {
		scheme: {
			id: scheme.id,
			name: scheme.name,
			description: scheme.description,
			createdAt: scheme.createdAt,
			createdByName: scheme.createdByName
		},
		revision: {
			number: scheme.latest.number,
			note: scheme.latest.note,
			document: scheme.latest.scheme,
			sourceFileName: scheme.latest.sourceFileName,
			sourceSha256: scheme.latest.sourceSha256,
			createdAt: scheme.latest.createdAt,
			createdByName: latest?.createdByName ?? null
		},
		revisionCount: revisions.length,
		audits,
		preview,
		previewError,
		may: { model: can(role, 'model') }
	};
};

/** The conditions panel's fields as sent by the form: temperatureK, forcePN and one `c:<species>` (µM) per species. */
function conditionsFromForm(form: FormData) {
	const number = (v: FormDataEntryValue | null) => (v === null || String(v).trim() === '' ? undefined : Number(String(v).trim()));
	const concentrationsM: Record<string, number | undefined> = {};
	for (const [key, value] of form.entries()) if (key.startsWith('c:')) concentrationsM[key.slice(2)] = number(value) === undefined ? undefined : number(value)! * 1e-6;
	const defined = Object.fromEntries(Object.entries(concentrationsM).filter(([, v]) => v !== undefined));
	return conditionsInput.safeParse({
		temperatureK: number(form.get('temperatureK')),
		forcePN: number(form.get('forcePN')),
		concentrationsM: Object.keys(defined).length ? defined : undefined
	});
}

export const actions: Actions = {
	run: async ({ locals, params, request }) => {
		const access = await requireLab(requireUser(locals), params.lab, 'model');
		const form = await request.formData();
		const conditions = conditionsFromForm(form);
		if (!conditions.success)
			return fail(400, { form: 'run' as const, message: `The conditions are not valid: ${conditions.error.issues.map((i) => `${i.path.join('.') || 'conditions'}: ${i.message}`).join('; ')}.` });
		const revision = Number(form.get('revision')) || undefined;
		let audit;
		try {
			audit = await runAudit(access, params.scheme, { revision, conditions: conditions.data });
		} catch (err) {
			if (err instanceof EngineError) return fail(422, { form: 'run' as const, message: err.message });
			if (isHttpError(err)) return fail(err.status, { form: 'run' as const, message: err.body.message });
			throw err;
		}
		redirect(303, `/labs/${params.lab}/audits/${audit.id}`);
	},

	save: async ({ locals, params, request }) => {
		const access = await requireLab(requireUser(locals), params.lab, 'model');
		const form = await request.formData();
		const note = z.string().trim().max(2000).safeParse(String(form.get('note') ?? ''));
		if (!note.success) return fail(400, { form: 'save' as const, message: 'Keep the note under 2000 characters.' });
		if (!note.data) return fail(400, { form: 'save' as const, message: 'Say in a few words what changed (the note is kept with the revision).' });
		let document: unknown;
		try {
			document = JSON.parse(String(form.get('scheme') ?? ''));
		} catch {
			return fail(400, { form: 'save' as const, message: 'The edited tables could not be read. Reload the page and try again.' });
		}
		let saved;
		try {
			saved = await saveRevision(access, params.scheme, { scheme: document, note: note.data });
		} catch (err) {
			if (err instanceof SchemeInputError) return fail(err.status, { form: 'save' as const, message: err.message, issues: err.issues });
			if (isHttpError(err)) return fail(err.status, { form: 'save' as const, message: err.body.message });
			throw err;
		}
		redirect(303, `/labs/${params.lab}/schemes/${params.scheme}?saved=${saved.revision.number}`);
	}
};
