/**
 * Schemes and their revisions, per lab. Every saved change makes a new revision; a revision is never edited
 * (a trigger enforces it), so an audit always points at exactly the scheme it checked. Callers pass a LabAccess
 * from requireLab(); these functions check the capability again where they write.
 */
import { error } from '@sveltejs/kit';
import { and, asc, count, desc, eq, ilike, max, or, sql } from 'drizzle-orm';
import { db, schema, type Tx } from './db';
import { can, type LabAccess } from './access';
import { logActivity } from './activity';
import { sha256Hex } from './canonical';
import { parseScheme, type Scheme } from '../engine';
import { schemeIdIssues } from './input-guard';

export interface SourceFile {
	fileName: string;
	bytes: Uint8Array;
	contentType: string;
}

export class SchemeInputError extends Error {
	/** 422 when the scheme passes a size limit (the same answer as the JSON API), else 400 (a form to correct) */
	readonly status: 400 | 422;
	constructor(public readonly issues: { path: string; message: string; limit?: string }[]) {
		super(`The scheme has ${issues.length} problem${issues.length === 1 ? '' : 's'}: ${issues.map((i) => `${i.path}: ${i.message}`).join('; ')}`);
		this.status = issues.some((i) => i.limit) ? 422 : 400;
	}
}

function requireModeller(access: LabAccess) {
	if (!can(access.role, 'model')) error(403, { message: 'Only modellers and lab leads create or change schemes.', code: 'forbidden' });
}

/** Validates a scheme document with the engine; throws SchemeInputError listing every problem. */
export function validScheme(input: unknown): Scheme {
	// Look-alike, invisible and reserved ids first: on the raw document, before a parser drops keys like __proto__.
	const hostile = schemeIdIssues(input);
	if (hostile.length) throw new SchemeInputError(hostile);
	const parsed = parseScheme(input);
	if (!parsed.ok) throw new SchemeInputError(parsed.errors);
	return parsed.scheme;
}

export const SCHEME_SORTS = ['name', 'created', 'updated'] as const;
export type SchemeSort = (typeof SCHEME_SORTS)[number];

export async function listSchemes(
	labId: string,
	opts: { q?: string; sort?: SchemeSort; dir?: 'asc' | 'desc'; page?: number; pageSize?: number } = {}
) {
	const pageSize = Math.min(Math.max(opts.pageSize ?? 20, 1), 100);
	const page = Math.max(opts.page ?? 1, 1);
	// The search text is literal: % and _ would be LIKE wildcards, backslash is LIKE's escape character.
	const pattern = opts.q ? `%${opts.q.replace(/[\\%_]/g, '\\$&')}%` : '';
	const where = opts.q
		? and(eq(schema.schemes.labId, labId), or(ilike(schema.schemes.name, pattern), ilike(schema.schemes.description, pattern)))
		: eq(schema.schemes.labId, labId);
	const column = { name: schema.schemes.name, created: schema.schemes.createdAt, updated: schema.schemes.updatedAt }[opts.sort ?? 'updated'];
	const order = (opts.dir ?? (opts.sort === 'name' ? 'asc' : 'desc')) === 'asc' ? asc(column) : desc(column);

	const lastAudit = db
		.selectDistinctOn([schema.audits.schemeId], {
			schemeId: schema.audits.schemeId,
			verdict: schema.audits.verdict,
			status: schema.audits.status,
			auditId: schema.audits.id,
			auditedAt: schema.audits.createdAt
		})
		.from(schema.audits)
		.where(eq(schema.audits.labId, labId))
		.orderBy(schema.audits.schemeId, desc(schema.audits.createdAt))
		.as('last_audit');
	const revisions = db
		.select({ schemeId: schema.schemeRevisions.schemeId, revisions: max(schema.schemeRevisions.number).as('revisions') })
		.from(schema.schemeRevisions)
		.groupBy(schema.schemeRevisions.schemeId)
		.as('revs');

	const [rows, [{ total }]] = await Promise.all([
		db
			.select({
				id: schema.schemes.id,
				name: schema.schemes.name,
				description: schema.schemes.description,
				createdAt: schema.schemes.createdAt,
				updatedAt: schema.schemes.updatedAt,
				createdBy: schema.users.name,
				revisions: revisions.revisions,
				lastVerdict: lastAudit.verdict,
				lastAuditStatus: lastAudit.status,
				lastAuditId: lastAudit.auditId,
				lastAuditedAt: lastAudit.auditedAt
			})
			.from(schema.schemes)
			.innerJoin(schema.users, eq(schema.users.id, schema.schemes.createdBy))
			.leftJoin(revisions, eq(revisions.schemeId, schema.schemes.id))
			.leftJoin(lastAudit, eq(lastAudit.schemeId, schema.schemes.id))
			.where(where)
			.orderBy(order, asc(schema.schemes.id))
			.limit(pageSize)
			.offset((page - 1) * pageSize),
		db.select({ total: count() }).from(schema.schemes).where(where)
	]);
	return { rows, total, page, pageSize, pages: Math.max(1, Math.ceil(total / pageSize)) };
}

async function insertRevision(
	tx: Tx,
	access: LabAccess,
	schemeId: string,
	number: number,
	scheme: Scheme,
	note: string,
	source?: SourceFile | null
) {
	const [revision] = await tx
		.insert(schema.schemeRevisions)
		.values({
			schemeId,
			number,
			scheme,
			note,
			sourceFileName: source?.fileName ?? null,
			sourceSha256: source ? sha256Hex(source.bytes) : null,
			sourceBytes: source?.bytes ?? null,
			sourceContentType: source?.contentType ?? null,
			createdBy: access.user.id
		})
		.returning({ id: schema.schemeRevisions.id, number: schema.schemeRevisions.number });
	return revision;
}

export async function createScheme(
	access: LabAccess,
	input: { name?: string; description?: string; scheme: unknown; source?: SourceFile | null; note?: string }
) {
	requireModeller(access);
	const scheme = validScheme(input.scheme);
	const name = (input.name ?? scheme.name).trim() || 'Untitled scheme';
	return db.transaction(async (tx) => {
		const [clash] = await tx
			.select({ id: schema.schemes.id })
			.from(schema.schemes)
			.where(and(eq(schema.schemes.labId, access.lab.id), eq(schema.schemes.name, name)));
		if (clash) error(409, { message: `The lab already has a scheme named "${name}". Choose another name, or open it and save a new revision.`, code: 'conflict' });
		const [row] = await tx
			.insert(schema.schemes)
			.values({ labId: access.lab.id, name, description: input.description ?? '', createdBy: access.user.id })
			.returning();
		const revision = await insertRevision(tx, access, row.id, 1, { ...scheme, name }, input.note ?? 'First revision', input.source);
		await logActivity(
			{ labId: access.lab.id, actorId: access.user.id, kind: 'scheme-created', summary: `Created scheme "${name}"`, details: { schemeId: row.id, source: input.source?.fileName ?? null } },
			tx
		);
		return { scheme: row, revision };
	});
}

export async function saveRevision(
	access: LabAccess,
	schemeId: string,
	input: { scheme: unknown; note?: string; source?: SourceFile | null }
) {
	requireModeller(access);
	const scheme = validScheme(input.scheme);
	return db.transaction(async (tx) => {
		const [row] = await tx
			.select()
			.from(schema.schemes)
			.where(and(eq(schema.schemes.id, schemeId), eq(schema.schemes.labId, access.lab.id)))
			.for('update');
		if (!row) error(404, { message: 'No such scheme in this lab.', code: 'not_found' });
		const [{ latest }] = await tx
			.select({ latest: max(schema.schemeRevisions.number) })
			.from(schema.schemeRevisions)
			.where(eq(schema.schemeRevisions.schemeId, schemeId));
		const revision = await insertRevision(tx, access, schemeId, (latest ?? 0) + 1, scheme, input.note ?? '', input.source);
		await tx.update(schema.schemes).set({ updatedAt: new Date() }).where(eq(schema.schemes.id, schemeId));
		await logActivity(
			{ labId: access.lab.id, actorId: access.user.id, kind: 'revision-saved', summary: `Saved revision ${revision.number} of "${row.name}"`, details: { schemeId, revision: revision.number } },
			tx
		);
		return { scheme: row, revision };
	});
}

/** The scheme and its newest revision, or 404 when it is not in this lab. */
export async function getScheme(labId: string, schemeId: string) {
	if (!isUuid(schemeId)) error(404, { message: 'No such scheme in this lab.', code: 'not_found' });
	const [row] = await db
		.select({ scheme: schema.schemes, createdByName: schema.users.name })
		.from(schema.schemes)
		.innerJoin(schema.users, eq(schema.users.id, schema.schemes.createdBy))
		.where(and(eq(schema.schemes.id, schemeId), eq(schema.schemes.labId, labId)));
	if (!row) error(404, { message: 'No such scheme in this lab.', code: 'not_found' });
	const [latest] = await db
		.select({ ...revisionColumns, createdByName: schema.users.name })
		.from(schema.schemeRevisions)
		.innerJoin(schema.users, eq(schema.users.id, schema.schemeRevisions.createdBy))
		.where(eq(schema.schemeRevisions.schemeId, schemeId))
		.orderBy(desc(schema.schemeRevisions.number))
		.limit(1);
	return { ...row.scheme, createdByName: row.createdByName, latest: { ...latest, scheme: latest.scheme as Scheme } };
}

const revisionColumns = {
	id: schema.schemeRevisions.id,
	schemeId: schema.schemeRevisions.schemeId,
	number: schema.schemeRevisions.number,
	scheme: schema.schemeRevisions.scheme,
	note: schema.schemeRevisions.note,
	sourceFileName: schema.schemeRevisions.sourceFileName,
	sourceSha256: schema.schemeRevisions.sourceSha256,
	createdBy: schema.schemeRevisions.createdBy,
	createdAt: schema.schemeRevisions.createdAt
};

/** How many revisions a scheme has (the scheme page shows the count, not the list). */
export async function countRevisions(schemeId: string): Promise<number> {
	const [row] = await db.select({ n: count() }).from(schema.schemeRevisions).where(eq(schema.schemeRevisions.schemeId, schemeId));
	return row?.n ?? 0;
}

export async function listRevisions(labId: string, schemeId: string) {
	await getScheme(labId, schemeId);
	return db
		.select({
			id: schema.schemeRevisions.id,
			number: schema.schemeRevisions.number,
			note: schema.schemeRevisions.note,
			sourceFileName: schema.schemeRevisions.sourceFileName,
			sourceSha256: schema.schemeRevisions.sourceSha256,
			createdAt: schema.schemeRevisions.createdAt,
			createdByName: schema.users.name,
			states: sql<number>`jsonb_array_length(${schema.schemeRevisions.scheme}->'states')`,
			steps: sql<number>`jsonb_array_length(${schema.schemeRevisions.scheme}->'steps')`
		})
		.from(schema.schemeRevisions)
		.innerJoin(schema.users, eq(schema.users.id, schema.schemeRevisions.createdBy))
		.where(eq(schema.schemeRevisions.schemeId, schemeId))
		.orderBy(desc(schema.schemeRevisions.number));
}

/** One revision by its number within a scheme of this lab, or 404. */
export async function getRevision(labId: string, schemeId: string, number: number) {
	await getScheme(labId, schemeId);
	const [row] = await db
		.select(revisionColumns)
		.from(schema.schemeRevisions)
		.where(and(eq(schema.schemeRevisions.schemeId, schemeId), eq(schema.schemeRevisions.number, number)));
	if (!row) error(404, { message: `Revision ${number} does not exist.`, code: 'not_found' });
	return { ...row, scheme: row.scheme as Scheme };
}

/** The uploaded file kept with a revision, for download. */
export async function getRevisionSource(labId: string, schemeId: string, number: number) {
	await getScheme(labId, schemeId);
	const [row] = await db
		.select({
			fileName: schema.schemeRevisions.sourceFileName,
			bytes: schema.schemeRevisions.sourceBytes,
			contentType: schema.schemeRevisions.sourceContentType,
			sha256: schema.schemeRevisions.sourceSha256
		})
		.from(schema.schemeRevisions)
		.where(and(eq(schema.schemeRevisions.schemeId, schemeId), eq(schema.schemeRevisions.number, number)));
	if (!row?.bytes || !row.fileName) error(404, { message: 'This revision was not uploaded from a file.', code: 'not_found' });
	return row as { fileName: string; bytes: Uint8Array; contentType: string | null; sha256: string };
}

export function isUuid(value: string): boolean {
	return /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i.test(value);
}
