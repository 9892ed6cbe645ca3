/**
 * Who may do what, checked where data is touched. A lab that the person does not belong to answers 404
 * (its existence is not revealed); a lab they belong to with too small a role answers 403.
 */
import { error, redirect } from '@sveltejs/kit';
import { and, eq } from 'drizzle-orm';
import { db, schema } from './db';
import type { LabRole } from './db/schema';

export const ROLE_LABELS: Record<LabRole, string> = {
	lead: 'Lab lead',
	modeller: 'Modeller',
	reviewer: 'Reviewer',
	reader: 'Reader'
};

/** What each capability needs. */
export const CAN = {
	read: ['lead', 'modeller', 'reviewer', 'reader'],
	model: ['lead', 'modeller'],
	review: ['reviewer'],
	manage: ['lead']
} as const satisfies Record<string, readonly LabRole[]>;
export type Capability = keyof typeof CAN;

export type SignedInUser = NonNullable<App.Locals['user']>;
export interface LabAccess {
	lab: typeof schema.labs.$inferSelect;
	role: LabRole;
	user: SignedInUser;
}

/** For pages: send anonymous visitors to the sign-in page and back. */
export function requireUserPage(locals: App.Locals, url: URL): SignedInUser {
	if (!locals.user) redirect(303, `/signin?next=${encodeURIComponent(url.pathname + url.search)}`);
	return locals.user;
}

/** For JSON routes and actions: 401 without a session or token. */
export function requireUser(locals: App.Locals): SignedInUser {
	if (!locals.user) error(401, { message: 'Sign in, or send a personal API token as "Authorization: Bearer …".', code: 'unauthenticated' });
	return locals.user;
}

export async function findLabAccess(userId: string, slug: string): Promise<{ lab: LabAccess['lab']; role: LabRole } | null> {
	const [row] = await db
		.select({ lab: schema.labs, role: schema.labMembers.role })
		.from(schema.labs)
		.innerJoin(schema.labMembers, and(eq(schema.labMembers.labId, schema.labs.id), eq(schema.labMembers.userId, userId)))
		.where(eq(schema.labs.slug, slug));
	return row ?? null;
}

export function can(role: LabRole, capability: Capability): boolean {
	return (CAN[capability] as readonly LabRole[]).includes(role);
}

/** The lab and the person's role in it, or 404/403. */
export async function requireLab(user: SignedInUser, slug: string, capability: Capability = 'read'): Promise<LabAccess> {
	const found = await findLabAccess(user.id, slug);
	if (!found) error(404, { message: 'No such lab, or you are not a member of it.', code: 'not_found' });
	if (!can(found.role, capability)) {
		const needed = (CAN[capability] as readonly LabRole[]).map((r) => ROLE_LABELS[r]).join(' or ');
		error(403, { message: `This needs the role ${needed} in ${found.lab.name}; you are ${ROLE_LABELS[found.role]}.`, code: 'forbidden' });
	}
	return { ...found, user };
}

export async function labsOf(userId: string) {
	return db
		.select({ id: schema.labs.id, slug: schema.labs.slug, name: schema.labs.name, role: schema.labMembers.role })
		.from(schema.labMembers)
		.innerJoin(schema.labs, eq(schema.labs.id, schema.labMembers.labId))
		.where(eq(schema.labMembers.userId, userId))
		.orderBy(schema.labs.name);
}
