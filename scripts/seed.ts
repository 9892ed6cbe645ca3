/**
 * Seeds the demo lab: an invented motor lab with one person per role, and a second invented lab to show that
 * labs do not see each other. Idempotent: an existing demo lab is left as it is.
 *   tsx scripts/seed.ts                  seed
 *   tsx scripts/seed.ts --print-users    list the demo sign-ins
 *   tsx scripts/seed.ts --print-password print the shared demo password
 */
import { DEMO_PASSWORD, DEMO_USERS, seedDemo } from '../src/lib/server/demo/seed';

const arg = process.argv[2];
if (arg === '--print-password') {
	console.log(DEMO_PASSWORD);
} else if (arg === '--print-users') {
	for (const u of DEMO_USERS) console.log(`${u.roleLabel.padEnd(10)} ${u.email.padEnd(34)} ${u.name}`);
} else {
	const { db, closeDb } = await import('../src/lib/server/db/index');
	const result = await seedDemo(db);
	await closeDb();
	console.log(result.created ? '[escapement] demo lab seeded' : '[escapement] demo lab already present');
}
