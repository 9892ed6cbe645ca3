/**
 * Lab members: invitations by e-mail, role changes and removal, by the lab lead. A lab always keeps at least one lead,
 * also when two leads change each other's roles at the same moment (the lab's row is locked for each change).
 */
import { error } from '@sveltejs/kit';
import { randomBytes } from 'node:crypto';
import { and, eq, gt, isNull, ne, count } from 'drizzle-orm';
import { db, schema, type Tx } from './db';
import { can, ROLE_LABELS, type LabAccess } from './access';
import type { LabRole } from './db/schema';
import { logActivity } from './activity';
import { hashToken } from './api-tokens';
import { hashPassword, MIN_PASSWORD_LENGTH } from './passwords';
import { queueMail } from './jobs';
import { config } from './config';

const INVITATION_DAYS = 14;

function requireLead(access: LabAccess) {
	if (!can(access.role, 'manage')) error(403, { message: 'Only the lab lead manages members and roles.', code: 'forbidden' });
}

export async function listMembers(labId: string) {
	return db
		.select({ userId: schema.users.id, name: schema.users.name, email: schema.users.email, role: schema.labMembers.role, since: schema.labMembers.createdAt })
		.from(schema.labMembers)
		.innerJoin(schema.users, eq(schema.users.id, schema.labMembers.userId))
		.where(eq(schema.labMembers.labId, labId))
		.orderBy(schema.users.name);
}

export async function listOpenInvitations(labId: string) {
	return db
		.select({ id: schema.invitations.id, email: schema.invitations.email, role: schema.invitations.role, createdAt: schema.invitations.createdAt, expiresAt: schema.invitations.expiresAt })
		.from(schema.invitations)
		.where(and(eq(schema.invitations.labId, labId), isNull(schema.invitations.acceptedAt), gt(schema.invitations.expiresAt, new Date())))
		.orderBy(schema.invitations.createdAt);
}

/** Invites an address with a role; the link in the mail lets them join (and set a password if they are new). */
export async function invite(access: LabAccess, email: string, role: LabRole): Promise<{ link: string }> {
	requireLead(access);
	const address = email.trim().toLowerCase();
	const [already] = await db
		.select({ id: schema.users.id })
		.from(schema.labMembers)
		.innerJoin(schema.users, eq(schema.users.id, schema.labMembers.userId))
		.where(and(eq(schema.labMembers.labId, access.lab.id), eq(schema.users.email, address)));
	if (already) error(409, { message: `${address} is already a member of ${access.lab.name}. Change their role in the table instead.`, code: 'conflict' });
	const token = randomBytes(24).toString('base64url');
	const link = `${config.origin}/invite/${token}`;
	await db.transaction(async (tx) => {
		await tx.insert(schema.invitations).values({
			labId: access.lab.id,
			email: address,
			role,
			tokenHash: hashToken(token),
			invitedBy: access.user.id,
			expiresAt: new Date(Date.now() + INVITATION_DAYS * 86400_000)
		});
		await logActivity({ labId: access.lab.id, actorId: access.user.id, kind: 'member-invited', summary: `Invited ${address} as ${ROLE_LABELS[role]}` }, tx);
		await queueMail(
			{
				to: address,
				subject: `You are invited to ${access.lab.name} on Escapement`,
				text: `${access.user.name ?? access.user.email} invites you to join ${access.lab.name} on Escapement as ${ROLE_LABELS[role]}.\n\nAccept the invitation: ${link}\n\nThe link is valid for ${INVITATION_DAYS} days.`
			},
			tx
		);
	});
	return { link };
}

export async function findInvitation(token: string) {
	const [row] = await db
		.select({ invitation: schema.invitations, labName: schema.labs.name, labSlug: schema.labs.slug })
		.from(schema.invitations)
		.innerJoin(schema.labs, eq(schema.labs.id, schema.invitations.labId))
		.where(eq(schema.invitations.tokenHash, hashToken(token)));
	if (!row || row.invitation.acceptedAt || row.invitation.expiresAt < new Date()) return null;
	const [user] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, row.invitation.email));
	return { ...row, hasAccount: Boolean(user) };
}

/**
 * Accepts an invitation. A new person gives a name and password; an existing account must be the one signed in.
 */
export async function acceptInvitation(token: string, who: { signedInUserId: string | null; name?: string; password?: string }) {
	const found = await findInvitation(token);
	if (!found) error(404, { message: 'This invitation does not exist, has expired or was already used. Ask the lab lead for a new one.', code: 'not_found' });
	const { invitation } = found;
	return db.transaction(async (tx) => {
		let [user] = await tx.select().from(schema.users).where(eq(schema.users.email, invitation.email));
		if (user) {
			if (who.signedInUserId !== user.id) error(403, { message: `Sign in as ${invitation.email} to accept this invitation.`, code: 'forbidden' });
		} else {
			if (!who.name?.trim() || !who.password || who.password.length < MIN_PASSWORD_LENGTH)
				error(400, { message: `Give your name and a password of at least ${MIN_PASSWORD_LENGTH} characters.`, code: 'invalid' });
			[user] = await tx
				.insert(schema.users)
				.values({ email: invitation.email, name: who.name.trim(), passwordHash: await hashPassword(who.password), emailVerified: new Date() })
				.returning();
		}
		await tx
			.insert(schema.labMembers)
			.values({ labId: invitation.labId, userId: user.id, role: invitation.role })
			.onConflictDoUpdate({ target: [schema.labMembers.labId, schema.labMembers.userId], set: { role: invitation.role } });
		await tx.update(schema.invitations).set({ acceptedAt: new Date() }).where(eq(schema.invitations.id, invitation.id));
		await logActivity(
			{ labId: invitation.labId, actorId: user.id, kind: 'member-joined', summary: `${user.name ?? user.email} joined as ${ROLE_LABELS[invitation.role]}` },
			tx
		);
		return { labSlug: found.labSlug, email: user.email };
	});
}

/**
 * Runs a change of membership with the lab's row locked, so that changes of one lab's members happen one after the
 * other: the acting lead and the member are read again under the lock (of two leads demoting each other, the second
 * finds they are no longer lead), and the last-lead rule counts what is committed. The loser of a race gets 409.
 */
async function withMemberLock<T>(access: LabAccess, userId: string, change: (tx: Tx, member: { role: LabRole; name: string | null; email: string }) => Promise<T>): Promise<T> {
	requireLead(access);
	return db.transaction(async (tx) => {
		await tx.select({ id: schema.labs.id }).from(schema.labs).where(eq(schema.labs.id, access.lab.id)).for('update');
		const [actor] = await tx
			.select({ role: schema.labMembers.role })
			.from(schema.labMembers)
			.where(and(eq(schema.labMembers.labId, access.lab.id), eq(schema.labMembers.userId, access.user.id)));
		if (actor?.role !== 'lead') error(409, { message: 'Your role in this lab changed a moment ago: you are no longer its lead. Reload the page.', code: 'conflict' });
		const [member] = await tx
			.select({ role: schema.labMembers.role, name: schema.users.name, email: schema.users.email })
			.from(schema.labMembers)
			.innerJoin(schema.users, eq(schema.users.id, schema.labMembers.userId))
			.where(and(eq(schema.labMembers.labId, access.lab.id), eq(schema.labMembers.userId, userId)));
		if (!member) error(404, { message: 'No such member in this lab.', code: 'not_found' });
		return change(tx, member);
	});
}

/** Refuses a change that would leave the lab without a lead (called under the lab's lock). */
async function keepOneLead(tx: Tx, labId: string, leavingUserId: string): Promise<void> {
	const [{ n }] = await tx
		.select({ n: count() })
		.from(schema.labMembers)
		.where(and(eq(schema.labMembers.labId, labId), eq(schema.labMembers.role, 'lead'), ne(schema.labMembers.userId, leavingUserId)));
	if (n === 0) error(409, { message: 'A lab needs at least one lead. Make someone else lead first.', code: 'last_lead' });
}

export async function changeRole(access: LabAccess, userId: string, role: LabRole) {
	await withMemberLock(access, userId, async (tx, member) => {
		if (member.role === role) return;
		if (member.role === 'lead') await keepOneLead(tx, access.lab.id, userId);
		await tx.update(schema.labMembers).set({ role }).where(and(eq(schema.labMembers.labId, access.lab.id), eq(schema.labMembers.userId, userId)));
		await logActivity(
			{
				labId: access.lab.id,
				actorId: access.user.id,
				kind: 'role-changed',
				summary: `Changed ${member.name ?? member.email} from ${ROLE_LABELS[member.role]} to ${ROLE_LABELS[role]}`,
				details: { userId, from: member.role, to: role }
			},
			tx
		);
	});
}

export async function removeMember(access: LabAccess, userId: string) {
	await withMemberLock(access, userId, async (tx, member) => {
		if (member.role === 'lead') await keepOneLead(tx, access.lab.id, userId);
		await tx.delete(schema.labMembers).where(and(eq(schema.labMembers.labId, access.lab.id), eq(schema.labMembers.userId, userId)));
		await logActivity({ labId: access.lab.id, actorId: access.user.id, kind: 'member-removed', summary: `Removed ${member.name ?? member.email} from the lab` }, tx);
	});
}
