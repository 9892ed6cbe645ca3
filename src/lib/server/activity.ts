/** The append-only activity log: who did what, per lab. Rows are never updated or deleted (a trigger enforces it). */
import { eq } from 'drizzle-orm';
import { db, schema, type Tx } from './db';

export type ActivityKind =
	| 'sign-in'
	| 'member-invited'
	| 'member-joined'
	| 'role-changed'
	| 'member-removed'
	| 'scheme-created'
	| 'revision-saved'
	| 'audit-run'
	| 'audit-submitted'
	| 'audit-returned'
	| 'audit-signed'
	| 'token-created'
	| 'token-revoked';

export async function logActivity(
	entry: { labId: string | null; actorId: string | null; kind: ActivityKind; summary: string; details?: Record<string, unknown> },
	tx: Tx | typeof db = db
): Promise<void> {
	await tx.insert(schema.activityLog).values({ ...entry, details: entry.details ?? {} });
}

/** Log an event of a person in every lab they belong to (sign-ins concern each of their labs). */
export async function logActivityForUser(userId: string, kind: ActivityKind, summary: string): Promise<void> {
	const memberships = await db.select({ labId: schema.labMembers.labId }).from(schema.labMembers).where(eq(schema.labMembers.userId, userId));
	if (memberships.length === 0) {
		await logActivity({ labId: null, actorId: userId, kind, summary });
		return;
	}
	await db.insert(schema.activityLog).values(memberships.map((m) => ({ labId: m.labId, actorId: userId, kind, summary, details: {} })));
}
