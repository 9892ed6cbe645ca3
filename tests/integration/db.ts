/**
 * Integration-test helpers: the real PostgreSQL of `npm test` (DATABASE_URL points at a throwaway database that
 * scripts/test.sh migrated). Each test file makes its own lab and people with unique names, so files never collide.
 */
import { randomUUID } from 'node:crypto';
import { db, schema } from '../../src/lib/server/db/index';
import type { LabRole } from '../../src/lib/server/db/schema';
import { hashPassword } from '../../src/lib/server/passwords';

export { db, schema };
export const TEST_PASSWORD = 'integration-password-1';

export async function makeLab(roles: LabRole[] = ['lead', 'modeller', 'reviewer', 'reader']) {
	const tag = randomUUID().slice(0, 8);
	const passwordHash = await hashPassword(TEST_PASSWORD);
	const [lab] = await db.insert(schema.labs).values({ slug: `lab-${tag}`, name: `Test Lab ${tag}` }).returning();
	const people: Record<string, typeof schema.users.$inferSelect> = {};
	for (const role of roles) {
		const [user] = await db
			.insert(schema.users)
			.values({ email: `${role}-${tag}@lab.example`, name: `${role} ${tag}`, passwordHash })
			.returning();
		await db.insert(schema.labMembers).values({ labId: lab.id, userId: user.id, role });
		people[role] = user;
	}
	return { lab, people, tag };
}
