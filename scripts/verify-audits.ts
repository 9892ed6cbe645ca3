/**
 * Checks every signed audit of the database at DATABASE_URL (run by `npm run restore` after restoring a backup) with
 * verifyAudit, the check behind the audit page's "Verify" button: the hash recomputed from the stored inputs and
 * results, the server's signature of the signed record and each of its fields. Prints one line per audit (and what
 * differs) and a total as its last line, `signed audits: N verified, N failed`; exits 1 when any fails.
 */
import { eq } from 'drizzle-orm';
import { closeDb, db, schema } from '../src/lib/server/db/index';
import { verifyAuditById } from '../src/lib/server/audits';

const signed = await db.select({ id: schema.audits.id }).from(schema.audits).where(eq(schema.audits.status, 'signed')).orderBy(schema.audits.createdAt);
let verified = 0;
let failed = 0;
for (const { id } of signed) {
	const check = await verifyAuditById(id);
	if (check.matches) verified++;
	else failed++;
	console.log(`${check.matches ? 'ok     ' : 'FAILED '} ${id} sha256 ${check.recomputed.slice(0, 16)}…`);
	for (const p of check.problems) console.log(`        ${p.field}: ${p.message}`);
}
await closeDb();
console.log(`signed audits: ${verified} verified, ${failed} failed`);
process.exit(failed ? 1 : 0);
