import { fail, isHttpError, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { can, requireLab, requireUser, requireUserPage } from '$lib/server/access';
import { auditEtag, auditTagOf, getAudit, getAuditSummary, verifyAudit, adoptCorrection } from '$lib/server/audits';
import { REVALIDATE } from '$lib/server/conditional';
import { returnAudit, signAudit, submitForReview } from '$lib/server/reviews';
import { TREE_MAX_STATES, speciesOf, storedStallForce } from '$lib/server/audit-curves';
import { runEngine } from '$lib/server/engine-pool';
import { auditCycleTable } from '$lib/server/audit-cycles';
import { cyclePage, CYCLE_INLINE_MAX, CYCLE_PAGE_SIZE, CYCLE_SORT_DEFAULT } from '$lib/audit-cycles';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, params, url, request, isDataRequest, setHeaders }) => {
	const user = requireUserPage(locals, url);
	const access = await requireLab(user, params.lab, 'read');
	// A strong ETag: the audit's tag with the reader (what may be done here depends on who reads). SvelteKit answers
	// 304 itself when If-None-Match carries it; for the page data nothing else is read then, as the body is not sent.
	const reader = `${user.id}:${access.role}`;
	const etag = await auditEtag(access.lab.id, params.audit, reader);
	// exactly SvelteKit's own test (one tag, W/ ignored), so that the empty answer below is never sent
	const ifNoneMatch = request.headers.get('if-none-match');
	if (isDataRequest && (ifNoneMatch === etag || ifNoneMatch === `W/${etag}`)) {
		setHeaders({ etag, 'cache-control': REVALIDATE });
		return {} as never;
	}
	// the summary leaves the cycles in the database; their rows come from memory or one read of the whole audit
	const audit = await getAuditSummary(access.lab.id, params.audit);
	// the tag of what is read here (the review state may have moved since the tag above)
	setHeaders({ etag: auditTagOf(audit, reader), 'cache-control': REVALIDATE });
	const isAuthor = audit.createdBy === user.id;
	const open = audit.status === 'draft' || audit.status === 'returned';
	// Only the summary and one page of cycles go to the browser; the table asks the cycles route for more.
	const table = await auditCycleTable(access.lab.id, audit.id, audit.sha256);
	const inline = table.rows.length <= CYCLE_INLINE_MAX;
	const chosen = Number(url.searchParams.get('cycle'));
	const highlighted = Number.isInteger(chosen) && chosen >= 1 ? (table.rows[chosen - 1] ?? null) : null;
	// the audit's own stall force; audits stored before it was part of the audit (or past its budget) get it computed
	const stall = storedStallForce(audit.results.observables);
	return {
		audit: {
			id: audit.id,
			schemeId: audit.schemeId,
			schemeName: audit.schemeName,
			revision: audit.revision,
			status: audit.status,
			verdict: audit.verdict,
			verdictCounts: audit.verdictCounts,
			engineVersion: audit.engineVersion,
			sha256: audit.sha256,
			createdAt: audit.createdAt,
			createdByName: audit.createdByName ?? audit.createdByEmail,
			sourceFileName: audit.sourceFileName,
			signature: audit.signature
				? {
						signerName: audit.signature.signerName,
						signedAt: audit.signature.signedAt,
						comment: audit.signature.comment,
						sha256: audit.signature.sha256,
						violationAcknowledged: audit.signature.violationAcknowledged,
						keyFingerprint: audit.signature.keyFingerprint
					}
				: null,
			events: audit.events,
			inputs: audit.inputs,
			results: audit.results
		},
		cycles: {
			inline: inline ? table.rows : null,
			first: inline ? null : cyclePage(table.rows, { ...CYCLE_SORT_DEFAULT, page: 1, pageSize: CYCLE_PAGE_SIZE, cycle: highlighted?.index }),
			worst: table.worst,
			highlighted,
			violationCover: table.violationCover
		},
		stallForcePN: stall !== undefined ? stall : (await runEngine('stallForce', { scheme: audit.inputs })).stallForcePN,
		species: speciesOf(audit.inputs),
		treeMaxStates: TREE_MAX_STATES,
		review: {
			isAuthor,
			maySubmit: can(access.role, 'model') && open,
			maySign: can(access.role, 'review') && !isAuthor && audit.status === 'submitted',
			violations: audit.verdictCounts.violation ?? 0
		}
	};
};

/** Runs a review step and turns the service's refusal (403, 409…) into a form failure shown beside the form. */
async function attempt(action: string, run: () => Promise<unknown>) {
	try {
		await run();
		return { action, done: true as const };
	} catch (err) {
		if (isHttpError(err)) return fail(err.status, { action, message: err.body.message });
		throw err;
	}
}

const noteInput = z.string().trim().max(4000, { error: 'Keep the note under 4000 characters.' });

export const actions: Actions = {
	submit: async ({ locals, params, request }) => {
		const user = requireUser(locals);
		const form = await request.formData();
		const note = noteInput.safeParse(String(form.get('note') ?? ''));
		if (!note.success) return fail(400, { action: 'submit', message: note.error.issues[0].message });
		return attempt('submit', async () => submitForReview(await requireLab(user, params.lab, 'model'), params.audit, note.data));
	},
	sign: async ({ locals, params, request }) => {
		const user = requireUser(locals);
		const form = await request.formData();
		const password = String(form.get('password') ?? '');
		const comment = noteInput.safeParse(String(form.get('comment') ?? ''));
		if (!password) return fail(400, { action: 'sign', message: 'Enter your password again to sign.' });
		if (!comment.success) return fail(400, { action: 'sign', message: comment.error.issues[0].message });
		const acknowledgeViolation = form.get('acknowledgeViolation') === 'yes';
		return attempt('sign', async () => signAudit(await requireLab(user, params.lab, 'review'), params.audit, { password, comment: comment.data, acknowledgeViolation }));
	},
	return: async ({ locals, params, request }) => {
		const user = requireUser(locals);
		const form = await request.formData();
		const comment = noteInput.safeParse(String(form.get('comment') ?? ''));
		if (!comment.success) return fail(400, { action: 'return', message: comment.error.issues[0].message });
		if (!comment.data) return fail(400, { action: 'return', message: 'Say what should change: a returned audit needs a comment.' });
		return attempt('return', async () => returnAudit(await requireLab(user, params.lab, 'review'), params.audit, comment.data));
	},
	adopt: async ({ locals, params }) => {
		const user = requireUser(locals);
		let number: number;
		try {
			({ revision: { number } } = await adoptCorrection(await requireLab(user, params.lab, 'model'), params.audit));
		} catch (err) {
			if (isHttpError(err)) return fail(err.status, { action: 'adopt', message: err.body.message });
			throw err;
		}
		const { schemeId } = await getAudit((await requireLab(user, params.lab, 'read')).lab.id, params.audit);
		redirect(303, `/labs/${params.lab}/schemes/${schemeId}?saved=${number}`);
	},
	verify: async ({ locals, params }) => {
		const user = requireUser(locals);
		const access = await requireLab(user, params.lab, 'read');
		const audit = await getAudit(access.lab.id, params.audit);
		return { action: 'verify', verification: { ...(await verifyAudit(audit)), checkedAt: new Date().toISOString() } };
	}
};
