/**
 * The demo: Kestrel Motility Lab (invented), one person per role, and Brightwater Rotary Group (invented), a second
 * lab with its own lead. Schemes, audits and reviews of the demo are added by seedDemoSchemes when the engine is present.
 */
import { eq } from 'drizzle-orm';
import type { Db } from '../db';
import { schema } from '../db';
import { hashPassword } from '../passwords';
import type { LabRole } from '../db/schema';

export const DEMO_PASSWORD = 'kestrel-demo-2026';

export const DEMO_LAB = { slug: 'kestrel', name: 'Kestrel Motility Lab' };
export const OTHER_LAB = { slug: 'brightwater', name: 'Brightwater Rotary Group' };

export const DEMO_USERS: { email: string; name: string; role: LabRole; roleLabel: string; lab: string }[] = [
	{ email: 'maren.oduya@kestrel.example', name: 'Maren Oduya', role: 'lead', roleLabel: 'lead', lab: DEMO_LAB.slug },
	{ email: 'tobias.reinholt@kestrel.example', name: 'Tobias Reinholt', role: 'modeller', roleLabel: 'modeller', lab: DEMO_LAB.slug },
	{ email: 'priya.castellanos@kestrel.example', name: 'Priya Castellanos', role: 'reviewer', roleLabel: 'reviewer', lab: DEMO_LAB.slug },
	{ email: 'jun.adeyemi@kestrel.example', name: 'Jun Adeyemi', role: 'reader', roleLabel: 'reader', lab: DEMO_LAB.slug },
	{ email: 'elsa.varga@brightwater.example', name: 'Elsa Varga', role: 'lead', roleLabel: 'other lab', lab: OTHER_LAB.slug }
];

export async function seedDemo(db: Db): Promise<{ created: boolean }> {
	const [existing] = await db.select().from(schema.labs).where(eq(schema.labs.slug, DEMO_LAB.slug));
	if (existing) return { created: false };
	const passwordHash = await hashPassword(DEMO_PASSWORD);
	await db.transaction(async (tx) => {
		const labs = await tx.insert(schema.labs).values([DEMO_LAB, OTHER_LAB]).returning();
		const labId = (slug: string) => labs.find((l) => l.slug === slug)!.id;
		for (const u of DEMO_USERS) {
			const [user] = await tx
				.insert(schema.users)
				.values({ email: u.email, name: u.name, passwordHash, emailVerified: new Date() })
				.onConflictDoUpdate({ target: schema.users.email, set: { name: u.name } })
				.returning();
			await tx.insert(schema.labMembers).values({ labId: labId(u.lab), userId: user.id, role: u.role });
		}
	});
	return { created: true };
}
