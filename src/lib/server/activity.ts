/** The append-only activity log: who did what, per lab. Rows are never updated or deleted (a trigger enforces it). */
import { and, eq } from 'drizzle-orm';
import { RateLimiterMemory } from 'rate-limiter-flexible';
import { db, schema, type Tx } from './db';

export type ActivityKind =
	| 'sign-in'
	| 'member-invited'
	| 'member-joined'
	| 'role-changed'
	| 'member-removed'
	| 'scheme-created'
	| 'revision-saved'
	| 'audit-run'
	| 'audit-submitted'
	| 'audit-returned'
	| 'audit-signed'
	| 'token-created'
	| 'token-revoked'
	| 'sign-in-failed'
	| 'sign-failed'
	| 'request-refused';

export async function logActivity(
	entry: { labId: string | null; actorId: string | null; kind: ActivityKind; summary: string; details?: Record<string, unknown> },
	tx: Tx | typeof db = db
): Promise<void> {
	await tx.insert(schema.activityLog).values({ ...entry, details: entry.details ?? {} });
}

/** Log an event of a person in every lab they belong to (sign-ins concern each of their labs). */
export async function logActivityForUser(userId: string, kind: ActivityKind, summary: string): Promise<void> {
	const memberships = await db.select({ labId: schema.labMembers.labId }).from(schema.labMembers).where(eq(schema.labMembers.userId, userId));
	if (memberships.length === 0) {
		await logActivity({ labId: null, actorId: userId, kind, summary });
		return;
	}
	await db.insert(schema.activityLog).values(memberships.map((m) => ({ labId: m.labId, actorId: userId, kind, summary, details: {} })));
}

/** At most this many refusals a minute per kind reach the log, so that a flood of bad requests cannot fill it. */
const REFUSALS_LOGGED_PER_MINUTE = 120;
const refusalBudget = new RateLimiterMemory({ points: REFUSALS_LOGGED_PER_MINUTE, duration: 60, keyPrefix: 'refusal-log' });

/** False when this kind of refusal was logged too often in the last minute. */
export async function withinLogBudget(reason: string): Promise<boolean> {
	try {
		await refusalBudget.consume(reason);
		return true;
	} catch {
		return false;
	}
}

/**
 * A refused request (cross-site form, hostile or oversized input, a failed sign-in): who, where and why, without
 * the input itself. Never throws: a failing log must not turn a clean 4xx into a 500.
 */
export async function logRefusal(
	event: { url: URL; request: Request; locals?: Partial<App.Locals>; params?: Partial<Record<string, string>>; getClientAddress?: () => string },
	reason: string,
	summary: string,
	extra: { labId?: string | null; kind?: ActivityKind; actorId?: string | null } = {}
): Promise<void> {
	if (!(await withinLogBudget(reason))) return;
	let address: string | null = null;
	try {
		address = event.getClientAddress?.() ?? null;
	} catch {
		address = null;
	}
	// A member's refused request to their lab shows in that lab's activity (the lead reads it there).
	let labId = extra.labId ?? null;
	const slug = event.params?.lab;
	const userId = event.locals?.user?.id;
	if (!labId && slug && userId) {
		const [member] = await db
			.select({ labId: schema.labs.id })
			.from(schema.labs)
			.innerJoin(schema.labMembers, and(eq(schema.labMembers.labId, schema.labs.id), eq(schema.labMembers.userId, userId)))
			.where(eq(schema.labs.slug, slug))
			.catch(() => []);
		labId = member?.labId ?? null;
	}
	await logActivity({
		labId,
		actorId: extra.actorId ?? event.locals?.user?.id ?? null,
		kind: extra.kind ?? 'request-refused',
		summary: summary.slice(0, 300),
		details: { reason, method: event.request.method, path: event.url.pathname.slice(0, 300), address }
	}).catch((err) => console.warn('[escapement] activity: could not log a refusal:', (err as Error).message));
}
