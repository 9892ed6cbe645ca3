/**
 * Checks every signed audit of the database at DATABASE_URL (run by `npm run restore` after restoring a backup):
 * recomputes each audit's hash from its stored inputs and results and compares it with the stored and the signed
 * hash (verifyAudit, the check behind the audit page's "Verify" button). Prints one line per audit and a total as
 * its last line, `signed audits: N verified, N failed`; exits 1 when any fails.
 */
import { eq } from 'drizzle-orm';
import { closeDb, db, schema } from '../src/lib/server/db/index';
import { getAudit, verifyAudit } from '../src/lib/server/audits';

const signed = await db
	.select({ id: schema.audits.id, labId: schema.audits.labId })
	.from(schema.audits)
	.where(eq(schema.audits.status, 'signed'))
	.orderBy(schema.audits.createdAt);
let verified = 0;
let failed = 0;
for (const { id, labId } of signed) {
	const audit = await getAudit(labId, id);
	const check = await verifyAudit(audit);
	if (check.matches) verified++;
	else failed++;
	console.log(`${check.matches ? 'ok     ' : 'FAILED '} ${id} "${audit.schemeName}" r${audit.revision} sha256 ${check.recomputed.slice(0, 16)}…${check.matches ? '' : ` (differs: ${check.problems.map((p) => p.field).join(', ')})`}`);
}
await closeDb();
console.log(`signed audits: ${verified} verified, ${failed} failed`);
process.exit(failed ? 1 : 0);
