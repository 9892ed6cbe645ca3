import { fail, isHttpError, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { can, requireLab, requireUser, requireUserPage } from '$lib/server/access';
import { conditionsInput, countAudits, listAudits, previewAudit } from '$lib/server/audits';
import { requestAudit } from '$lib/server/jobs/audit-job';
import { activeJobsOfScheme } from '$lib/server/jobs/engine-jobs';
import { countRevisions, getScheme, saveRevision, SchemeInputError } from '$lib/server/schemes';
import { EngineError, type Audit } from '$lib/engine';
import { notableCycles, violationCover } from '$lib/audit-cycles';
import type { Actions, PageServerLoad } from './$types';

/** The largest scheme whose live results the page computes on opening. */
const LIVE_PREVIEW_MAX = { states: 200, steps: 400 };
/** The newest stored audits listed on the page; all of them through GET …/schemes/{scheme}/audits. */
const AUDITS_SHOWN = 50;

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const user = requireUserPage(locals, url);
	const { lab, role } = await requireLab(user, params.lab, 'read');
	const scheme = await getScheme(lab.id, params.scheme);
	const [revisionCount, audits, auditCount, jobs] = await Promise.all([
		countRevisions(scheme.id),
		listAudits(lab.id, params.scheme, AUDITS_SHOWN),
		countAudits(lab.id, params.scheme),
		activeJobsOfScheme(lab.id, params.scheme)
	]);
	let preview: Audit | null = null;
	let previewError: string | null = null;
	let previewSkipped: string | null = null;
	const doc = scheme.latest.scheme;
	if (doc.steps.length > LIVE_PREVIEW_MAX.steps || doc.states.length > LIVE_PREVIEW_MAX.states) {
		// An audit of thousands of steps takes minutes of engine time: not on every visit, only when asked for.
		previewSkipped = `This scheme has ${doc.states.length.toLocaleString('en')} states and ${doc.steps.length.toLocaleString('en')} steps; live results are computed on opening only up to ${LIVE_PREVIEW_MAX.states} states and ${LIVE_PREVIEW_MAX.steps} steps. Compute them on request, or run an audit (stored, with every cycle on its page).`;
	} else {
		try {
			const { results } = await previewAudit(doc);
			// Only the notable cycles go with the page, and violating ones that pass through every violating step (for
			// the diagram): the notable ones of this shorter list are the same. The rest grows with states + steps.
			const kept = new Set(notableCycles(results.cycles).map((n) => n.cycle));
			for (const c of violationCover(results.cycles)) kept.add(c);
			const index = new Map(results.cycles.map((c, i) => [c, i]));
			const cycles = results.cycles.filter((c) => kept.has(c));
			preview = { ...results, cycles, cycleAffinitiesKT: cycles.map((c) => results.cycleAffinitiesKT[index.get(c)!]) };
		} catch (err) {
			if (!(err instanceof EngineError)) throw err;
			previewError = err.message;
		}
	}
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
			createdByName: scheme.latest.createdByName ?? null
		},
		revisionCount,
		auditCount,
		audits,
		jobs: jobs.map((j) => ({ id: j.id, kind: j.kind, status: j.status, progress: j.progress, stage: j.stage, createdAt: j.createdAt })),
		preview,
		previewError,
		previewSkipped,
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
		const revisionText = String(form.get('revision') ?? '').trim();
		// A revision number is a small whole number; 1e308 or 1.5 would reach the database as an impossible integer.
		if (revisionText && !/^[1-9]\d{0,8}$/.test(revisionText)) return fail(400, { form: 'run' as const, message: `Revision "${revisionText.slice(0, 20)}" is not a revision number (1, 2, 3, …).` });
		const revision = revisionText ? Number(revisionText) : undefined;
		let outcome;
		try {
			outcome = await requestAudit(access, params.scheme, { revision, conditions: conditions.data });
		} catch (err) {
			if (err instanceof EngineError) return fail(422, { form: 'run' as const, message: err.message });
			if (isHttpError(err)) return fail(err.status, { form: 'run' as const, message: err.body.message });
			throw err;
		}
		// past the work budget the audit runs as a job: its page shows the progress and leads to the audit
		if (outcome.job) redirect(303, `/labs/${params.lab}/jobs/${outcome.job.id}`);
		redirect(303, `/labs/${params.lab}/audits/${outcome.audit.id}`);
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
