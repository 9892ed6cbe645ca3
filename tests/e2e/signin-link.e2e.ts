/**
 * Sign-in links by e-mail: the link goes out through nodemailer to the local SMTP sink, and following it signs the
 * person in. An address without an account gets no mail and a clear message.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pg from 'pg';
import type { BrowserContext } from 'playwright-core';
import { BASE_URL, openBrowser } from './browser';

let context: BrowserContext;
const db = new pg.Pool({ connectionString: process.env.DATABASE_URL });

beforeAll(async () => {
	context = await openBrowser();
});
afterAll(async () => {
	await context?.close();
	await db.end();
});

async function caughtLink(address: string, since: Date): Promise<string | null> {
	for (let i = 0; i < 60; i++) {
		const { rows } = await db.query<{ text_body: string }>(
			'select text_body from caught_mail where $1 = any(envelope_to) and received_at >= $2 order by received_at desc limit 1',
			[address, since]
		);
		const link = rows[0]?.text_body.match(/https?:\/\/\S+/)?.[0];
		if (link) return link;
		await new Promise((r) => setTimeout(r, 250));
	}
	return null;
}

describe('sign-in link by e-mail', () => {
	it('mails a one-time link to a known address, and the link signs the person in', async () => {
		const since = new Date(Date.now() - 1000);
		const page = await context.newPage();
		await page.goto(`${BASE_URL}/signin`);
		await page.getByRole('tab', { name: 'E-mail me a link' }).click();
		await page.getByLabel('E-mail').fill('jun.adeyemi@kestrel.example');
		await page.getByRole('button', { name: 'Send me a sign-in link' }).click();
		await page.waitForURL(/\/signin\/check-mail/);
		const link = await caughtLink('jun.adeyemi@kestrel.example', since);
		expect(link).toMatch(/\/auth\/callback\/email-link\?/);
		await page.goto(link!);
		await page.waitForURL(/\/labs/);
		expect(await page.getByText('Kestrel Motility Lab').first().isVisible()).toBe(true);
		// The link works once.
		const again = await context.newPage();
		await context.clearCookies();
		await again.goto(link!);
		await again.waitForURL(/\/signin/);
		expect(await again.getByRole('alert').textContent()).toMatch(/expired or was already used/);
		await page.close();
		await again.close();
	});

	it('sends nothing to an address without an account, and answers as for one with an account', async () => {
		const since = new Date(Date.now() - 1000);
		const page = await context.newPage();
		await page.goto(`${BASE_URL}/signin`);
		await page.getByRole('tab', { name: 'E-mail me a link' }).click();
		await page.getByLabel('E-mail').fill('stranger@nowhere.example');
		await page.getByRole('button', { name: 'Send me a sign-in link' }).click();
		await page.waitForURL(/\/signin\/check-mail/);
		expect(await page.getByRole('heading', { level: 1 }).textContent()).toMatch(/Check your mail/);
		const { rows } = await db.query('select 1 from caught_mail where $1 = any(envelope_to) and received_at >= $2', ['stranger@nowhere.example', since]);
		expect(rows).toHaveLength(0);
		await page.close();
	});
});
