/**
 * The cycles of a stored audit as table rows, for the audit page and the cycles API route. A 20,000-cycle audit takes
 * most of a second to read and parse from PostgreSQL, and the cycles table asks for one page at a time; so the rows of
 * the few large audits looked at last stay in memory. Stored results never change (a database trigger refuses it),
 * so an entry cannot go stale; each use still checks that the audit is in the lab with the same hash.
 */
import { and, eq } from 'drizzle-orm';
import { db, schema } from './db';
import { getAudit, type StoredAudit } from './audits';
import { CYCLE_INLINE_MAX, cycleRows, violationCover, worstCycle, type CycleRow } from '../audit-cycles';
import type { AuditCycle } from '../engine';

export interface AuditCycleTable {
	rows: CycleRow[];
	worst: CycleRow | null;
	/** violating cycles that together pass through every step of every violating cycle (for the diagram) */
	violationCover: AuditCycle[];
}

/** Large audits kept; each costs roughly 2–3 kB of memory per cycle. */
const KEPT = 3;
const kept = new Map<string, { labId: string; sha256: string; table: AuditCycleTable }>();

/** The table rows of an audit read with getAudit (remembered when the audit is large). */
function cycleTableOf(audit: StoredAudit): AuditCycleTable {
	const hit = kept.get(audit.id);
	if (hit && hit.labId === audit.labId && hit.sha256 === audit.sha256) return hit.table;
	const rows = cycleRows(audit.results.cycles, audit.results.cycleAffinitiesKT);
	const table = { rows, worst: worstCycle(rows), violationCover: violationCover(audit.results.cycles) };
	if (rows.length > CYCLE_INLINE_MAX) {
		kept.delete(audit.id);
		kept.set(audit.id, { labId: audit.labId, sha256: audit.sha256, table });
		while (kept.size > KEPT) kept.delete(kept.keys().next().value!);
	}
	return table;
}

/**
 * The table rows of an audit of this lab (404 when the lab has no such audit), from memory when possible. A caller
 * that has just read the audit's hash (getAuditSummary) passes it and saves the check.
 */
export async function auditCycleTable(labId: string, auditId: string, sha256?: string): Promise<AuditCycleTable> {
	const hit = kept.get(auditId);
	if (hit && hit.labId === labId) {
		const [row] = sha256
			? [{ sha256 }]
			: await db
					.select({ sha256: schema.audits.sha256 })
					.from(schema.audits)
					.where(and(eq(schema.audits.id, auditId), eq(schema.audits.labId, labId)));
		if (row?.sha256 === hit.sha256) {
			kept.delete(auditId);
			kept.set(auditId, hit);
			return hit.table;
		}
		kept.delete(auditId);
	}
	return cycleTableOf(await getAudit(labId, auditId));
}
