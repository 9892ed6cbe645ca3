/**
 * The Caught mail page stands in for a mail server in development: each person reads only the messages addressed to
 * their own account. Regression test of an account takeover: a lead invited another lab's lead, asked for a sign-in
 * link for that address, and opened it from the lab's caught mail.
 */
import { describe, expect, it } from 'vitest';
import { sql } from 'drizzle-orm';
import { db, schema, makeLab } from './db';
import { invite } from '../../src/lib/server/members';
import { sendMail } from '../../src/lib/server/mail/send';
import type { LabAccess } from '../../src/lib/server/access';
import { load as mailPageLoad } from '../../src/routes/(app)/mail/+page.server';

async function caughtFor(address: string, subjectPart: string, timeoutMs = 20_000) {
	const until = Date.now() + timeoutMs;
	while (Date.now() < until) {
		const rows = await db
			.select()
			.from(schema.caughtMail)
			.where(sql`${address} = any(${schema.caughtMail.envelopeTo}) and ${schema.caughtMail.subject} like ${'%' + subjectPart + '%'}`);
		if (rows.length) return rows[0];
		await new Promise((r) => setTimeout(r, 200));
	}
	throw new Error(`no caught mail to ${address} with "${subjectPart}" within ${timeoutMs} ms`);
}

type PageUser = { id: string; email: string; name: string | null };

/** The page's own load function, as SvelteKit calls it for a signed-in person. */
async function openMailPage(user: PageUser, open?: number) {
	const url = new URL(`http://127.0.0.1/mail${open ? `?open=${open}` : ''}`);
	const event = { locals: { user }, url, params: {} } as unknown as Parameters<typeof mailPageLoad>[0];
	return (await mailPageLoad(event)) as { messages: { id: number; to: string[]; textBody: string }[]; open: number; selected: { id: number; textBody: string } | null };
}

describe('caught mail shows each person only their own messages', () => {
	it('regression: a lead who invites another lab’s lead cannot read that person’s sign-in link', async () => {
		const mine = await makeLab(['lead']);
		const theirs = await makeLab(['lead']);
		const attacker = mine.people.lead;
		const victim = theirs.people.lead;
		const lead: LabAccess = { lab: mine.lab, role: 'lead', user: { id: attacker.id, email: attacker.email, name: attacker.name } };

		// Step 1 of the attack: the victim's address becomes "an address the lab invited".
		await invite(lead, victim.email, 'reader');
		// Step 2: a sign-in link is requested for the victim's address (the text Auth.js mails through the sink).
		const secret = `http://127.0.0.1/auth/callback/email-link?token=secret-${theirs.tag}&email=${encodeURIComponent(victim.email)}`;
		await sendMail({ to: victim.email, subject: 'Your Escapement sign-in link', text: `Sign in: ${secret}` });
		const link = await caughtFor(victim.email, 'sign-in link');

		// Step 3: the attacker opens Caught mail, and asks for the message by its id.
		const page = await openMailPage(attacker);
		expect(page.messages.map((m) => m.id)).not.toContain(link.id);
		expect(JSON.stringify(page.messages)).not.toContain(`secret-${theirs.tag}`);
		const direct = await openMailPage(attacker, link.id);
		expect(direct.selected).toBeNull();
		expect(JSON.stringify(direct)).not.toContain(`secret-${theirs.tag}`);

		// The victim reads their own link.
		const own = await openMailPage(victim, link.id);
		expect(own.selected?.textBody).toContain(`secret-${theirs.tag}`);
	});

	it('a lead no longer sees the messages to the members of their lab, only those to themselves', async () => {
		const { people, tag } = await makeLab(['lead', 'reviewer']);
		await sendMail({ to: people.reviewer.email, subject: `Review requested ${tag}`, text: 'for the reviewer' });
		await sendMail({ to: people.lead.email, subject: `For the lead ${tag}`, text: 'for the lead' });
		const toReviewer = await caughtFor(people.reviewer.email, tag);
		const toLead = await caughtFor(people.lead.email, tag);
		const ids = (await openMailPage(people.lead)).messages.map((m) => m.id);
		expect(ids).toContain(toLead.id);
		expect(ids).not.toContain(toReviewer.id);
		expect((await openMailPage(people.reviewer)).messages.map((m) => m.id)).toEqual([toReviewer.id]);
	});
});
