/** Personal API tokens: shown once on creation, stored as SHA-256 only, revocable. */
import { createHash, randomBytes } from 'node:crypto';
import { and, eq, isNull } from 'drizzle-orm';
import { db, schema } from './db';

const PREFIX = 'esc_';

export function hashToken(token: string): string {
	return createHash('sha256').update(token).digest('hex');
}

export async function createApiToken(userId: string, name: string): Promise<{ id: string; token: string }> {
	const token = PREFIX + randomBytes(24).toString('base64url');
	const [row] = await db
		.insert(schema.apiTokens)
		.values({ userId, name, tokenHash: hashToken(token), prefix: token.slice(0, PREFIX.length + 6) })
		.returning({ id: schema.apiTokens.id });
	return { id: row.id, token };
}

export async function userFromApiToken(token: string): Promise<{ id: string; email: string; name: string | null } | null> {
	if (!token.startsWith(PREFIX)) return null;
	const [row] = await db
		.select({ tokenId: schema.apiTokens.id, id: schema.users.id, email: schema.users.email, name: schema.users.name })
		.from(schema.apiTokens)
		.innerJoin(schema.users, eq(schema.users.id, schema.apiTokens.userId))
		.where(and(eq(schema.apiTokens.tokenHash, hashToken(token)), isNull(schema.apiTokens.revokedAt)));
	if (!row) return null;
	await db.update(schema.apiTokens).set({ lastUsedAt: new Date() }).where(eq(schema.apiTokens.id, row.tokenId));
	return { id: row.id, email: row.email, name: row.name };
}
