/**
 * Browser sessions kept on the server (table user_sessions). The session cookie is a signed JWT naming one row;
 * Auth.js's jwt callback checks the row on every request, so a cookie dies with sign-out, with a password change
 * (all other sessions of the person), and SESSION_MAX_AGE_S after sign-in however active it was: no renewal.
 */
import { randomBytes } from 'node:crypto';
import { and, eq, gt, isNull, ne } from 'drizzle-orm';
import { db, schema } from './db';

export const SESSION_MAX_AGE_S = 8 * 60 * 60;

export async function startSession(userId: string, method: 'password' | 'email-link'): Promise<string> {
	const id = randomBytes(24).toString('base64url');
	await db.insert(schema.userSessions).values({ id, userId, method, expiresAt: new Date(Date.now() + SESSION_MAX_AGE_S * 1000) });
	return id;
}

/** True while the session exists, belongs to the person, is not revoked and is younger than its fixed lifetime. */
export async function sessionIsLive(id: string, userId: string): Promise<boolean> {
	const [row] = await db
		.select({ id: schema.userSessions.id })
		.from(schema.userSessions)
		.where(and(eq(schema.userSessions.id, id), eq(schema.userSessions.userId, userId), isNull(schema.userSessions.revokedAt), gt(schema.userSessions.expiresAt, new Date())));
	return Boolean(row);
}

export async function endSession(id: string): Promise<void> {
	await db.update(schema.userSessions).set({ revokedAt: new Date() }).where(and(eq(schema.userSessions.id, id), isNull(schema.userSessions.revokedAt)));
}

/** Revokes every live session of the person except `keep` (the one that changed the password); returns how many. */
export async function endOtherSessions(userId: string, keep: string | null): Promise<number> {
	const rows = await db
		.update(schema.userSessions)
		.set({ revokedAt: new Date() })
		.where(and(eq(schema.userSessions.userId, userId), isNull(schema.userSessions.revokedAt), ...(keep ? [ne(schema.userSessions.id, keep)] : [])))
		.returning({ id: schema.userSessions.id });
	return rows.length;
}
