/**
 * Audits: a revision checked at given conditions, stored with a snapshot of its inputs, the full results, the engine
 * version, who ran it and when, and a SHA-256 of the canonical inputs and results. Stored audits never change
 * (a trigger refuses it); only their review status moves, and not at all once signed.
 */
import { error } from '@sveltejs/kit';
import { and, desc, eq, getTableColumns, sql } from 'drizzle-orm';
import { z } from 'zod';
import { db, schema, type Tx } from './db';
import { can, type LabAccess } from './access';
import { logActivity } from './activity';
import { auditWork, overBudget, runEngine } from './engine-pool';
import { compareRecord, inputsHash, serverKey, type RecordProblem, type SignedRecord } from './signing';
import { tagPart } from './conditional';
import { getRevision, getScheme, isUuid, saveRevision } from './schemes';
import type { AuditSummary } from '../audit-cycles';
import { applyCorrection, type Audit, type Scheme, type Verdict } from '../engine';

export const VERDICT_ORDER: readonly Verdict[] = ['violation', 'irreversible', 'unbalanced', 'consistent'];

/** Conditions a modeller may change without editing the scheme. */
export const conditionsInput = z
	.object({
		temperatureK: z.number().gt(200).lt(400).optional(),
		forcePN: z.number().gt(-200).lt(200).optional(),
		concentrationsM: z.record(z.string(), z.number().positive().lt(100)).optional()
	})
	.strict();
export type Conditions = z.infer<typeof conditionsInput>;

export function worstVerdict(counts: Record<Verdict, number>): Verdict {
	return VERDICT_ORDER.find((v) => counts[v] > 0) ?? 'consistent';
}

/**
 * Runs the engine (in the pool) on a scheme at the given conditions, without storing anything (the live conditions
 * panel). Past the work budget the preview judges on the cycle basis only (maxCycles 0; its findings say so): the
 * steady state, observables and verdict stay complete, and the stored audit, run as a job, lists the cycles.
 */
export async function previewAudit(scheme: Scheme, conditions: Conditions = {}): Promise<{ results: Audit }> {
	const { results } = await runEngine('preview', { scheme, conditions, options: previewOptions(scheme) });
	return { results: results! };
}

/** The same as JSON text, for the API (the web server neither parses nor serializes it). */
export async function previewAuditJson(scheme: Scheme, conditions: Conditions = {}): Promise<string> {
	return (await runEngine('preview', { scheme, conditions, asJson: true, options: previewOptions(scheme) })).resultsJson!;
}

const previewOptions = (scheme: Scheme) => (overBudget(auditWork(scheme)) ? { maxCycles: 0 } : {});

/** The columns of a stored audit other than its (large) inputs and results. */
const { inputs: _inputs, results: _results, ...auditRowColumns } = getTableColumns(schema.audits);
export type AuditRow = { [K in keyof typeof auditRowColumns]: (typeof schema.audits.$inferSelect)[K] };

export type AuditEngineOutcome = Awaited<ReturnType<typeof runEngine<'audit'>>>;

/** The engine's part of an audit: the revision at the conditions, audited and hashed in the pool. */
export async function computeAudit(
	scheme: Scheme,
	conditions: Conditions | undefined,
	onProgress?: (p: { fraction: number; stage: string }) => void,
	signal?: AbortSignal
) {
	return runEngine('audit', { scheme, conditions }, { onProgress, signal });
}

/** The revision an audit request names (the newest by default), or 404. */
export async function auditedRevision(access: LabAccess, schemeId: string, revisionNumber?: number) {
	if (!can(access.role, 'model')) error(403, { message: 'Only modellers and lab leads run audits.', code: 'forbidden' });
	const scheme = await getScheme(access.lab.id, schemeId);
	const revision = revisionNumber ? await getRevision(access.lab.id, schemeId, revisionNumber) : scheme.latest;
	return { scheme, revision };
}

export async function runAudit(access: LabAccess, schemeId: string, opts: { revision?: number; conditions?: Conditions } = {}): Promise<AuditRow> {
	const { scheme, revision } = await auditedRevision(access, schemeId, opts.revision);
	const outcome = await computeAudit(revision.scheme as Scheme, opts.conditions);
	return storeAudit(access, { schemeId, schemeName: scheme.name, revisionId: revision.id, revisionNumber: revision.number }, outcome);
}

/**
 * Stores a computed audit with its activity entry in one transaction. The results go to PostgreSQL as the JSON text
 * the engine thread wrote, and only the small columns come back.
 */
export async function storeAudit(
	access: Pick<LabAccess, 'lab' | 'user'>,
	target: { schemeId: string; schemeName: string; revisionId: string; revisionNumber: number },
	outcome: AuditEngineOutcome,
	tx?: Tx
): Promise<AuditRow> {
	const counts = outcome.verdictCounts;
	const write = async (t: Tx) => {
		const [row] = await t
			.insert(schema.audits)
			.values({
				labId: access.lab.id,
				schemeId: target.schemeId,
				revisionId: target.revisionId,
				inputs: outcome.inputs,
				results: sql`${outcome.resultsJson}::jsonb`,
				engineVersion: outcome.engineVersion,
				sha256: outcome.sha256,
				verdict: worstVerdict(counts),
				verdictCounts: counts,
				createdBy: access.user.id
			})
			.returning(auditRowColumns);
		// the summary pages and lists read, derived by PostgreSQL from the results just stored
		await t.execute(sql`insert into audit_summaries (audit_id, summary, cycle_count)
			select id, results - 'cycles' - 'cycleAffinitiesKT', coalesce((results ->> 'cycleCount')::int, jsonb_array_length(results -> 'cycles'))
			from audits where id = ${row.id}`);
		await logActivity(
			{
				labId: access.lab.id,
				actorId: access.user.id,
				kind: 'audit-run',
				summary: `Audited "${target.schemeName}" revision ${target.revisionNumber}: ${worstVerdict(counts)}`,
				details: { auditId: row.id, schemeId: target.schemeId, revision: target.revisionNumber }
			},
			t
		);
		return row;
	};
	return tx ? write(tx) : db.transaction(write);
}

/** The stored audits of a scheme, newest first; `limit` for a page that shows only the newest. */
export async function listAudits(labId: string, schemeId: string, limit?: number) {
	await getScheme(labId, schemeId);
	const query = db
		.select({
			id: schema.audits.id,
			createdAt: schema.audits.createdAt,
			verdict: schema.audits.verdict,
			verdictCounts: schema.audits.verdictCounts,
			status: schema.audits.status,
			revision: schema.schemeRevisions.number,
			createdByName: schema.users.name
		})
		.from(schema.audits)
		.innerJoin(schema.schemeRevisions, eq(schema.schemeRevisions.id, schema.audits.revisionId))
		.innerJoin(schema.users, eq(schema.users.id, schema.audits.createdBy))
		.where(and(eq(schema.audits.labId, labId), eq(schema.audits.schemeId, schemeId)))
		.orderBy(desc(schema.audits.createdAt))
		.$dynamic();
	return limit ? query.limit(limit) : query;
}

/** How many audits a scheme has stored. */
export async function countAudits(labId: string, schemeId: string): Promise<number> {
	const [row] = await db
		.select({ n: sql<number>`count(*)::int` })
		.from(schema.audits)
		.where(and(eq(schema.audits.labId, labId), eq(schema.audits.schemeId, schemeId)));
	return row?.n ?? 0;
}

/**
 * The strong entity tag of what a reader gets of an audit: its SHA-256 (inputs and results never change) with its
 * review status and number of review events (which move), from one small query; 404 as getAudit. `reader` folds in
 * who reads, for a page whose content depends on it.
 */
export async function auditEtag(labId: string, auditId: string, reader?: string): Promise<string> {
	if (!isUuid(auditId)) error(404, { message: 'No such audit in this lab.', code: 'not_found' });
	const [row] = await db
		.select({
			sha256: schema.audits.sha256,
			status: schema.audits.status,
			events: sql<number>`(select count(*) from review_events e where e.audit_id = "audits"."id")::int`
		})
		.from(schema.audits)
		.where(and(eq(schema.audits.id, auditId), eq(schema.audits.labId, labId)));
	if (!row) error(404, { message: 'No such audit in this lab.', code: 'not_found' });
	return auditTagOf(row, reader);
}

/** The entity tag of an audit already read (getAudit, getAuditSummary): the same as auditEtag's. */
export function auditTagOf(audit: { sha256: string; status: string; events: number | unknown[] }, reader?: string): string {
	const events = typeof audit.events === 'number' ? audit.events : audit.events.length;
	return `"${audit.sha256}-${audit.status}-${events}${reader ? `-${tagPart(reader)}` : ''}"`;
}

/** One audit of this lab with its scheme, revision number, author and signature, or 404. */
export async function getAudit(labId: string, auditId: string) {
	return readAudit(labId, auditId, true);
}

/**
 * The same without the per-cycle lists of the results (`cycles`, `cycleAffinitiesKT`): the audit's stored summary
 * (audit_summaries), for a page that lists the cycles by other means. Up to 20,000 cycles take most of a second to
 * read and parse; the summary does not grow with them. Not for hashing.
 */
export async function getAuditSummary(labId: string, auditId: string) {
	const audit = await readAudit(labId, auditId, false);
	return audit as Omit<typeof audit, 'results'> & { results: AuditSummary };
}

async function readAudit(labId: string, auditId: string, withCycles: boolean) {
	if (!isUuid(auditId)) error(404, { message: 'No such audit in this lab.', code: 'not_found' });
	const { results, ...columns } = getTableColumns(schema.audits);
	const [row] = await db
		.select({
			// the stored summary (the results are not parsed then); computed for a row stored without one
			audit: {
				...columns,
				results: withCycles ? results : sql<unknown>`coalesce(${schema.auditSummaries.summary}, ${results} - 'cycles' - 'cycleAffinitiesKT')`
			},
			schemeName: schema.schemes.name,
			revision: schema.schemeRevisions.number,
			sourceFileName: schema.schemeRevisions.sourceFileName,
			sourceSha256: schema.schemeRevisions.sourceSha256,
			createdByName: schema.users.name,
			createdByEmail: schema.users.email
		})
		.from(schema.audits)
		.leftJoin(schema.auditSummaries, eq(schema.auditSummaries.auditId, schema.audits.id))
		.innerJoin(schema.schemes, eq(schema.schemes.id, schema.audits.schemeId))
		.innerJoin(schema.schemeRevisions, eq(schema.schemeRevisions.id, schema.audits.revisionId))
		.innerJoin(schema.users, eq(schema.users.id, schema.audits.createdBy))
		.where(and(eq(schema.audits.id, auditId), eq(schema.audits.labId, labId)));
	if (!row) error(404, { message: 'No such audit in this lab.', code: 'not_found' });
	const [signature] = await db.select().from(schema.signatures).where(eq(schema.signatures.auditId, auditId));
	const events = await db
		.select({ kind: schema.reviewEvents.kind, note: schema.reviewEvents.note, createdAt: schema.reviewEvents.createdAt, actorName: schema.users.name })
		.from(schema.reviewEvents)
		.innerJoin(schema.users, eq(schema.users.id, schema.reviewEvents.actorId))
		.where(eq(schema.reviewEvents.auditId, auditId))
		.orderBy(schema.reviewEvents.createdAt);
	return {
		...row.audit,
		inputs: row.audit.inputs as Scheme,
		results: row.audit.results as Audit,
		verdictCounts: row.audit.verdictCounts as Record<Verdict, number>,
		schemeName: row.schemeName,
		revision: row.revision,
		sourceFileName: row.sourceFileName,
		sourceSha256: row.sourceSha256,
		createdByName: row.createdByName,
		createdByEmail: row.createdByEmail,
		signature: signature ?? null,
		events
	};
}
export type StoredAudit = Awaited<ReturnType<typeof getAudit>>;

/** What a signature row adds to the record: signer, time, comment and the acknowledgement of violations. */
export interface SignatureFields {
	signerId: string;
	signerName: string;
	signedAt: Date;
	comment: string;
	violationAcknowledged: boolean;
}

/**
 * The record a reviewer signs, built from the rows as stored: every field the audit page and the PDF show as part
 * of a signed audit. Built at signing, and again at verification to compare with what was signed.
 */
export async function recordFields(audit: StoredAudit, signature: SignatureFields): Promise<Omit<SignedRecord, 'format' | 'key'>> {
	const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.id, audit.labId));
	return {
		audit: {
			id: audit.id,
			createdAt: audit.createdAt.toISOString(),
			engineVersion: audit.engineVersion,
			contentSha256: audit.sha256,
			inputsSha256: inputsHash(audit.inputs),
			verdict: audit.verdict,
			verdictCounts: audit.verdictCounts
		},
		lab: { id: audit.labId, slug: lab?.slug ?? '', name: lab?.name ?? '' },
		scheme: { id: audit.schemeId, name: audit.schemeName },
		revision: { id: audit.revisionId, number: audit.revision, sourceFileName: audit.sourceFileName ?? null, sourceSha256: audit.sourceSha256 ?? null },
		author: { id: audit.createdBy, name: audit.createdByName ?? null, email: audit.createdByEmail },
		signer: { id: signature.signerId, name: signature.signerName },
		signedAt: signature.signedAt.toISOString(),
		comment: signature.comment,
		violationAcknowledged: signature.violationAcknowledged
	};
}

export interface Verification {
	/** True when nothing below differs: the hash holds and, for a signed audit, the server signature and every field. */
	matches: boolean;
	recomputed: string;
	stored: string;
	signed: string | null;
	/** Each field that differs from what was signed (or from the stored hash), with what to tell the reader. */
	problems: RecordProblem[];
	/** For a signed audit: whether the Ed25519 signature holds, and the fingerprint of the key it names. */
	signature: { valid: boolean; keyFingerprint: string | null; serverKeyFingerprint: string } | null;
}

/**
 * Verifies an audit. Always: recomputes the content hash from the stored inputs and results (the engine pool reads
 * them as text and hashes them off the event loop) and compares it with the stored hash. For a signed audit also:
 * the server's Ed25519 signature over the signed record, every field of that record against the rows as stored now,
 * and the recomputed hash against the signed one. Says which field differs.
 */
export async function verifyAudit(audit: StoredAudit): Promise<Verification> {
	const [text] = await db
		.select({ inputsJson: sql<string>`${schema.audits.inputs}::text`, resultsJson: sql<string>`${schema.audits.results}::text` })
		.from(schema.audits)
		.where(eq(schema.audits.id, audit.id));
	if (!text) error(404, { message: 'No such audit in this lab.', code: 'not_found' });
	const { sha256: recomputed } = await runEngine('rehash', { ...text, engineVersion: audit.engineVersion });
	const problems: RecordProblem[] = [];
	if (recomputed !== audit.sha256)
		problems.push({ field: 'results', message: 'The stored inputs and results no longer hash to the stored SHA-256: inputs, results or the engine version were changed.' });
	const sig = audit.signature;
	if (!sig) return { matches: problems.length === 0, recomputed, stored: audit.sha256, signed: null, problems, signature: null };

	const current = await recordFields(audit, {
		signerId: sig.signerId,
		signerName: sig.signerName,
		signedAt: sig.signedAt,
		comment: sig.comment,
		violationAcknowledged: sig.violationAcknowledged
	});
	const recordProblems = compareRecord(sig.record, sig.recordSignature, current);
	problems.push(...recordProblems);
	if (audit.status !== 'signed') problems.push({ field: 'status', message: `The audit has a signature but its status is ${audit.status}.` });
	if (sig.sha256 !== audit.sha256) problems.push({ field: 'signature.sha256', message: 'The hash in the signature row differs from the audit’s stored hash.' });
	const signedRecord = sig.record ? (JSON.parse(sig.record) as SignedRecord) : null;
	if (signedRecord && recomputed !== signedRecord.audit.contentSha256) {
		const inputsChanged = recordProblems.some((p) => p.field === 'audit.inputsSha256');
		problems.push({
			field: inputsChanged ? 'inputs' : 'results',
			message: `The stored ${inputsChanged ? 'inputs' : 'results'} do not hash to the content hash that was signed (${signedRecord.audit.contentSha256.slice(0, 16)}…).`
		});
	}
	const valid = Boolean(sig.record && sig.recordSignature) && !recordProblems.some((p) => p.field === 'signature');
	return {
		matches: problems.length === 0,
		recomputed,
		stored: audit.sha256,
		signed: sig.sha256,
		problems,
		signature: { valid, keyFingerprint: signedRecord?.key?.fingerprint ?? null, serverKeyFingerprint: serverKey().fingerprint }
	};
}

/** The same for an audit named by its id alone (scripts, restore checks). */
export async function verifyAuditById(auditId: string): Promise<Verification & { labId: string }> {
	const [row] = await db.select({ labId: schema.audits.labId }).from(schema.audits).where(eq(schema.audits.id, auditId));
	if (!row) error(404, { message: 'No such audit.', code: 'not_found' });
	return { ...(await verifyAudit(await getAudit(row.labId, auditId))), labId: row.labId };
}

/** Provenance block for exports. */
export function provenanceOf(audit: StoredAudit) {
	return {
		sourceFileName: audit.sourceFileName,
		sourceSha256: audit.sourceSha256,
		engineVersion: audit.engineVersion,
		createdAt: audit.createdAt.toISOString(),
		createdBy: audit.createdByName ?? audit.createdByEmail,
		auditSha256: audit.sha256
	};
}

/**
 * Adopts an audit's correction proposal: the revision it audited, with the proposed rates, saved as a new revision
 * of the scheme (the audited revision and the audit itself stay as they were). Returns the new revision.
 */
export async function adoptCorrection(access: LabAccess, auditId: string) {
	if (!can(access.role, 'model')) error(403, { message: 'Only modellers and lab leads change schemes.', code: 'forbidden' });
	const audit = await getAudit(access.lab.id, auditId);
	const correction = audit.results.correction;
	if (correction && correction.feasible === false)
		error(409, { message: `This audit has no consistent correction to save. ${correction.reason ?? ''}`.trim(), code: 'no_correction' });
	if (!correction || correction.changes.length === 0)
		error(409, { message: 'This audit proposes no correction: no cycle violates consistency.', code: 'no_correction' });
	const audited = await getRevision(access.lab.id, audit.schemeId, audit.revision);
	const corrected = applyCorrection(audited.scheme, correction);
	const list = correction.changes.map((c) => `${c.stepId} ${c.rate === 'kForward' ? 'k+' : 'k−'} ×${c.factor.toPrecision(3)}`).join(', ');
	return saveRevision(access, audit.schemeId, {
		scheme: corrected,
		note: `Smallest consistent correction proposed by the audit of revision ${audit.revision} (${list}). A proposal, not a measurement: check the changed rates against their sources.`
	});
}
