/** Personal API tokens: shown once on creation, stored as SHA-256 only, revocable, optionally expiring. */
import { createHash, randomBytes } from 'node:crypto';
import { and, desc, eq, gt, isNull, or } from 'drizzle-orm';
import { db, schema } from './db';
import { logActivityForUser } from './activity';

const PREFIX = 'esc_';

export function hashToken(token: string): string {
	return createHash('sha256').update(token).digest('hex');
}

/** Lifetimes offered on the account page, in days; null: until revoked. */
export const TOKEN_LIFETIMES_DAYS = [30, 90, 365, null] as const;

export async function createApiToken(userId: string, name: string, lifetimeDays: number | null = null): Promise<{ id: string; token: string; expiresAt: Date | null }> {
	const token = PREFIX + randomBytes(24).toString('base64url');
	const expiresAt = lifetimeDays === null ? null : new Date(Date.now() + lifetimeDays * 86_400_000);
	const [row] = await db
		.insert(schema.apiTokens)
		.values({ userId, name, tokenHash: hashToken(token), prefix: token.slice(0, PREFIX.length + 6), expiresAt })
		.returning({ id: schema.apiTokens.id });
	const until = expiresAt ? `, valid until ${expiresAt.toISOString().slice(0, 10)}` : '';
	await logActivityForUser(userId, 'token-created', `Created the API token "${name}" (${token.slice(0, PREFIX.length + 6)}…${until})`);
	return { id: row.id, token, expiresAt };
}

/** A person's tokens, newest first; never the token itself (only its first characters). */
export async function listApiTokens(userId: string) {
	return db
		.select({
			id: schema.apiTokens.id,
			name: schema.apiTokens.name,
			prefix: schema.apiTokens.prefix,
			createdAt: schema.apiTokens.createdAt,
			lastUsedAt: schema.apiTokens.lastUsedAt,
			revokedAt: schema.apiTokens.revokedAt,
			expiresAt: schema.apiTokens.expiresAt
		})
		.from(schema.apiTokens)
		.where(eq(schema.apiTokens.userId, userId))
		.orderBy(desc(schema.apiTokens.createdAt));
}

/** Revokes one of the person's own tokens; false when there is no such live token of theirs. */
export async function revokeApiToken(userId: string, tokenId: string): Promise<boolean> {
	if (!/^[0-9a-f-]{36}$/i.test(tokenId)) return false;
	const [row] = await db
		.update(schema.apiTokens)
		.set({ revokedAt: new Date() })
		.where(and(eq(schema.apiTokens.id, tokenId), eq(schema.apiTokens.userId, userId), isNull(schema.apiTokens.revokedAt)))
		.returning({ name: schema.apiTokens.name, prefix: schema.apiTokens.prefix });
	if (!row) return false;
	await logActivityForUser(userId, 'token-revoked', `Revoked the API token "${row.name}" (${row.prefix}…)`);
	return true;
}

/** The token's owner while the token is live (not revoked, not expired); null otherwise. */
export async function userFromApiToken(token: string): Promise<{ id: string; email: string; name: string | null } | null> {
	if (!token.startsWith(PREFIX)) return null;
	const [row] = await db
		.select({ tokenId: schema.apiTokens.id, id: schema.users.id, email: schema.users.email, name: schema.users.name })
		.from(schema.apiTokens)
		.innerJoin(schema.users, eq(schema.users.id, schema.apiTokens.userId))
		.where(
			and(
				eq(schema.apiTokens.tokenHash, hashToken(token)),
				isNull(schema.apiTokens.revokedAt),
				or(isNull(schema.apiTokens.expiresAt), gt(schema.apiTokens.expiresAt, new Date()))
			)
		);
	if (!row) return null;
	await db.update(schema.apiTokens).set({ lastUsedAt: new Date() }).where(eq(schema.apiTokens.id, row.tokenId));
	return { id: row.id, email: row.email, name: row.name };
}
