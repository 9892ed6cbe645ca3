/**
 * The demo: Kestrel Motility Lab (invented), one person per role, and Brightwater Rotary Group (invented), a second
 * lab with its own lead; three invented schemes with audits, one signed and one waiting for review.
 */
import { eq } from 'drizzle-orm';
import type { Db } from '../db';
import { schema } from '../db';
import { hashPassword } from '../passwords';
import type { LabRole } from '../db/schema';
import { createScheme } from '../schemes';
import { getAudit, runAudit } from '../audits';
import { signatureValues } from '../reviews';
import { compositeWithViolation, stepperWithFutileBranch, threeSiteRotary } from './schemes';

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

/** Schemes, audits and reviews of the demo lab: one audit signed, one waiting for review, one draft with violations. */
async function seedSchemes(db: Db, labId: string): Promise<void> {
	const person = async (email: string) => (await db.select().from(schema.users).where(eq(schema.users.email, email)))[0];
	const modeller = await person(DEMO_USERS[1].email);
	const reviewer = await person(DEMO_USERS[2].email);
	const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.id, labId));
	const access = { lab, role: 'modeller' as const, user: { id: modeller.id, email: modeller.email, name: modeller.name } };

	const stepper = await createScheme(access, { scheme: stepperWithFutileBranch(), description: 'Hand-over-hand stepper, 8 nm per ATP, with a futile hydrolysis branch. Rates fitted in the lab (invented).' });
	const rotary = await createScheme(access, { scheme: threeSiteRotary(), description: 'Three catalytic sites, 80° + 40° substeps per ATP; rotation as arc length at a 1 nm lever.' });
	const composite = await createScheme(access, { scheme: compositeWithViolation(), description: 'K-7 rates collected from several papers; checking before we simulate.' });

	const signed = await runAudit(access, stepper.scheme.id);
	const waiting = await runAudit(access, rotary.scheme.id);
	await runAudit(access, composite.scheme.id);

	// The review history is written directly: the demo needs no mail to be sent. The signature is a real one, with the
	// server's key, over the record as it will be stored.
	const signature = await signatureValues(
		await getAudit(labId, signed.id),
		{ id: reviewer.id, name: reviewer.name ?? reviewer.email },
		'All cycles balance within uncertainty; stall force is plausible.',
		false
	);
	await db.transaction(async (tx) => {
		await tx.update(schema.audits).set({ status: 'submitted' }).where(eq(schema.audits.id, signed.id));
		await tx.insert(schema.reviewEvents).values({ auditId: signed.id, kind: 'submitted', actorId: modeller.id, note: 'Fitted rates from the March trap data; please check before the manuscript goes out.' });
		await tx.update(schema.audits).set({ status: 'signed' }).where(eq(schema.audits.id, signed.id));
		await tx.insert(schema.signatures).values(signature);
		await tx.insert(schema.reviewEvents).values({ auditId: signed.id, kind: 'signed', actorId: reviewer.id, note: 'All cycles balance within uncertainty; stall force is plausible.' });
		await tx.update(schema.audits).set({ status: 'submitted' }).where(eq(schema.audits.id, waiting.id));
		await tx.insert(schema.reviewEvents).values({ auditId: waiting.id, kind: 'submitted', actorId: modeller.id, note: 'Torque dependence split 0.6/0.4 between the substeps; is that defensible?' });
		await tx.insert(schema.activityLog).values([
			{ labId, actorId: modeller.id, kind: 'audit-submitted', summary: `Submitted the audit of "${stepper.scheme.name}" r1 for review`, details: { auditId: signed.id } },
			{ labId, actorId: reviewer.id, kind: 'audit-signed', summary: `Signed the audit of "${stepper.scheme.name}" r1`, details: { auditId: signed.id, sha256: signed.sha256 } },
			{ labId, actorId: modeller.id, kind: 'audit-submitted', summary: `Submitted the audit of "${rotary.scheme.name}" r1 for review`, details: { auditId: waiting.id } }
		]);
	});
}

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
	const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.slug, DEMO_LAB.slug));
	await seedSchemes(db, lab.id);
	return { created: true };
}
