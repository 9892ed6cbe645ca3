/**
 * Review and sign-off. A modeller submits an audit with a note; the lab's reviewers are mailed and see it in their
 * queue. A reviewer who is not the audit's author signs it after entering their password again, or returns it with
 * comments. The signature records signer, time, comment and the audit's SHA-256; from then on PostgreSQL refuses
 * any change to the audit, its signature or its history. Each state change is one transaction with a status-checked
 * UPDATE (of two racing requests one wins, the other gets 409), and its mail is queued in that same transaction.
 */
import { error } from '@sveltejs/kit';
import { and, desc, eq, inArray, sql } from 'drizzle-orm';
import { db, schema, type Tx } from './db';
import type { AuditStatus } from './db/schema';
import { can, type LabAccess } from './access';
import { logActivity } from './activity';
import { getAudit, recordFields, verifyAudit, type StoredAudit } from './audits';
import { requirePassword } from './rate-limit';
import { signRecord } from './signing';
import { queueMail } from './jobs';
import { config } from './config';

function auditUrl(access: LabAccess, auditId: string): string {
	return `${config.origin}/labs/${access.lab.slug}/audits/${auditId}`;
}

async function reviewersOf(labId: string) {
	return db
		.select({ id: schema.users.id, email: schema.users.email, name: schema.users.name })
		.from(schema.labMembers)
		.innerJoin(schema.users, eq(schema.users.id, schema.labMembers.userId))
		.where(and(eq(schema.labMembers.labId, labId), eq(schema.labMembers.role, 'reviewer')));
}

/**
 * Moves the audit's status from one of `from` to `to` inside the transaction, or answers 409: the UPDATE checks the
 * status itself, so of two racing requests the second waits for the first's row lock, then finds the status moved.
 */
async function moveStatus(tx: Tx, auditId: string, from: AuditStatus[], to: AuditStatus, whenMoved: string): Promise<void> {
	const moved = await tx
		.update(schema.audits)
		.set({ status: to })
		.where(and(eq(schema.audits.id, auditId), inArray(schema.audits.status, from)))
		.returning({ id: schema.audits.id });
	if (moved.length === 1) return;
	const [now] = await tx.select({ status: schema.audits.status }).from(schema.audits).where(eq(schema.audits.id, auditId));
	error(409, { message: `${whenMoved} It is now ${now?.status ?? 'gone'}; reload the page to see its current state.`, code: 'conflict' });
}

export async function submitForReview(access: LabAccess, auditId: string, note: string) {
	if (!can(access.role, 'model')) error(403, { message: 'Only modellers and lab leads submit audits for review.', code: 'forbidden' });
	const audit = await getAudit(access.lab.id, auditId);
	if (audit.status === 'submitted') error(409, { message: 'This audit is already waiting for review.', code: 'conflict' });
	if (audit.status === 'signed') error(409, { message: 'This audit is signed; run a new audit to review changes.', code: 'conflict' });
	const reviewers = (await reviewersOf(access.lab.id)).filter((r) => r.id !== audit.createdBy);
	if (reviewers.length === 0) error(409, { message: 'The lab has no reviewer other than the audit’s author. Ask the lab lead to give someone the reviewer role.', code: 'no_reviewer' });
	const counts = audit.verdictCounts;
	await db.transaction(async (tx) => {
		await moveStatus(tx, auditId, ['draft', 'returned'], 'submitted', 'This audit was submitted or signed by someone else a moment ago.');
		await tx.insert(schema.reviewEvents).values({ auditId, kind: 'submitted', actorId: access.user.id, note });
		await logActivity(
			{ labId: access.lab.id, actorId: access.user.id, kind: 'audit-submitted', summary: `Submitted the audit of "${audit.schemeName}" r${audit.revision} for review`, details: { auditId } },
			tx
		);
		// In the same transaction: the reviewers are mailed exactly when the submission commits.
		await queueMail(
			{
				to: reviewers.map((r) => r.email),
				subject: `Review requested: ${audit.schemeName} (revision ${audit.revision})`,
				text: [
					`${access.user.name ?? access.user.email} asks you to review an audit in ${access.lab.name}.`,
					'',
					`Scheme: ${audit.schemeName}, revision ${audit.revision}`,
					`Cycles: ${audit.results.cycleCount}${audit.results.cyclesComplete ? '' : ' (enumeration capped)'} — ${counts.consistent} consistent, ${counts.violation} violation, ${counts.irreversible} irreversible, ${counts.unbalanced} unbalanced`,
					note ? `Note: ${note}` : '',
					'',
					`Open the audit: ${auditUrl(access, auditId)}`
				].join('\n')
			},
			tx
		);
	});
	return { notified: reviewers.length };
}

async function requireReviewable(access: LabAccess, auditId: string) {
	if (!can(access.role, 'review')) error(403, { message: 'Only reviewers sign or return audits.', code: 'forbidden' });
	const audit = await getAudit(access.lab.id, auditId);
	if (audit.createdBy === access.user.id) error(403, { message: 'You ran this audit; another reviewer must check it.', code: 'own_audit' });
	if (audit.status !== 'submitted') error(409, { message: `This audit is ${audit.status}, not waiting for review.`, code: 'conflict' });
	return audit;
}

/** An audit with at least one violating cycle needs an explicit acknowledgement, with a comment, to be signed. */
export function needsAcknowledgement(audit: Pick<StoredAudit, 'verdictCounts'>): boolean {
	return (audit.verdictCounts.violation ?? 0) > 0;
}

/** The values of a signature row: the record of every shown field, signed with the server's Ed25519 key. */
export async function signatureValues(audit: StoredAudit, signer: { id: string; name: string }, comment: string, violationAcknowledged: boolean) {
	// Set here rather than by the column default, so that the record names the time the row stores (to the ms).
	const signedAt = new Date();
	const fields = await recordFields(audit, { signerId: signer.id, signerName: signer.name, signedAt, comment, violationAcknowledged });
	const { text, signature, fingerprint } = signRecord(fields);
	return { auditId: audit.id, signerId: signer.id, signerName: signer.name, comment, sha256: audit.sha256, signedAt, violationAcknowledged, record: text, recordSignature: signature, keyFingerprint: fingerprint };
}

export async function signAudit(access: LabAccess, auditId: string, input: { password: string; comment: string; acknowledgeViolation?: boolean }) {
	const audit = await requireReviewable(access, auditId);
	const [me] = await db.select().from(schema.users).where(eq(schema.users.id, access.user.id));
	await requirePassword({ email: me?.email ?? access.user.email, userId: access.user.id, passwordHash: me?.passwordHash }, input.password, 'sign', 'That password is not right. Enter your own password to sign.');
	const comment = input.comment.trim();
	const acknowledged = needsAcknowledgement(audit);
	if (acknowledged && (!input.acknowledgeViolation || !comment))
		error(400, {
			message: `This audit has ${audit.verdictCounts.violation} violating cycle(s). To sign it anyway, tick the acknowledgement and say in the comment why the record should stand as it is.`,
			code: 'acknowledgement_required'
		});
	const check = await verifyAudit(audit);
	if (!check.matches) error(409, { message: 'The stored audit no longer matches its hash; it cannot be signed. Run the audit again.', code: 'hash_mismatch' });
	const signerName = me.name ?? me.email;
	const values = await signatureValues(audit, { id: me.id, name: signerName }, comment, acknowledged);
	await db.transaction(async (tx) => {
		await moveStatus(tx, auditId, ['submitted'], 'signed', 'This audit was signed or returned by someone else a moment ago.');
		await tx.insert(schema.signatures).values(values);
		await tx.insert(schema.reviewEvents).values({ auditId, kind: 'signed', actorId: me.id, note: comment });
		await logActivity(
			{
				labId: access.lab.id,
				actorId: me.id,
				kind: 'audit-signed',
				summary: `Signed the audit of "${audit.schemeName}" r${audit.revision}${acknowledged ? ' (violations acknowledged)' : ''}`,
				details: { auditId, sha256: audit.sha256, keyFingerprint: values.keyFingerprint, violationAcknowledged: acknowledged }
			},
			tx
		);
		await queueMail(
			{
				to: audit.createdByEmail,
				subject: `Signed: ${audit.schemeName} (revision ${audit.revision})`,
				text: `${signerName} signed your audit of ${audit.schemeName}, revision ${audit.revision}.\n${acknowledged ? '\nThe reviewer acknowledged its violating cycles.\n' : ''}${comment ? `\nComment: ${comment}\n` : ''}\nSHA-256: ${audit.sha256}\n\n${auditUrl(access, auditId)}`
			},
			tx
		);
	});
}

export async function returnAudit(access: LabAccess, auditId: string, comment: string) {
	if (!comment.trim()) error(400, { message: 'Say what should change: a returned audit needs a comment.', code: 'comment_required' });
	const audit = await requireReviewable(access, auditId);
	await db.transaction(async (tx) => {
		await moveStatus(tx, auditId, ['submitted'], 'returned', 'This audit was signed or returned by someone else a moment ago.');
		await tx.insert(schema.reviewEvents).values({ auditId, kind: 'returned', actorId: access.user.id, note: comment });
		await logActivity(
			{ labId: access.lab.id, actorId: access.user.id, kind: 'audit-returned', summary: `Returned the audit of "${audit.schemeName}" r${audit.revision}`, details: { auditId } },
			tx
		);
		await queueMail(
			{
				to: audit.createdByEmail,
				subject: `Returned with comments: ${audit.schemeName} (revision ${audit.revision})`,
				text: `${access.user.name ?? access.user.email} returned your audit of ${audit.schemeName}, revision ${audit.revision}.\n\nComments:\n${comment}\n\n${auditUrl(access, auditId)}`
			},
			tx
		);
	});
}

/** Audits waiting for review in a lab, oldest first, with their summaries. */
export async function reviewQueue(labId: string) {
	return db
		.select({
			id: schema.audits.id,
			schemeId: schema.audits.schemeId,
			schemeName: schema.schemes.name,
			revision: schema.schemeRevisions.number,
			verdict: schema.audits.verdict,
			verdictCounts: schema.audits.verdictCounts,
			createdBy: schema.audits.createdBy,
			createdByName: schema.users.name,
			createdAt: schema.audits.createdAt,
			submittedAt: sql<Date>`(select max(e.created_at) from review_events e where e.audit_id = ${schema.audits.id} and e.kind = 'submitted')`,
			note: sql<string>`(select e.note from review_events e where e.audit_id = ${schema.audits.id} and e.kind = 'submitted' order by e.created_at desc limit 1)`
		})
		.from(schema.audits)
		.innerJoin(schema.schemes, eq(schema.schemes.id, schema.audits.schemeId))
		.innerJoin(schema.schemeRevisions, eq(schema.schemeRevisions.id, schema.audits.revisionId))
		.innerJoin(schema.users, eq(schema.users.id, schema.audits.createdBy))
		.where(and(eq(schema.audits.labId, labId), eq(schema.audits.status, 'submitted')))
		.orderBy(schema.audits.createdAt);
}

/** Recently signed audits of a lab. */
export async function recentlySigned(labId: string, limit = 20) {
	return db
		.select({
			id: schema.audits.id,
			schemeName: schema.schemes.name,
			revision: schema.schemeRevisions.number,
			signerName: schema.signatures.signerName,
			signedAt: schema.signatures.signedAt,
			sha256: schema.signatures.sha256
		})
		.from(schema.signatures)
		.innerJoin(schema.audits, eq(schema.audits.id, schema.signatures.auditId))
		.innerJoin(schema.schemes, eq(schema.schemes.id, schema.audits.schemeId))
		.innerJoin(schema.schemeRevisions, eq(schema.schemeRevisions.id, schema.audits.revisionId))
		.where(eq(schema.audits.labId, labId))
		.orderBy(desc(schema.signatures.signedAt))
		.limit(limit);
}
