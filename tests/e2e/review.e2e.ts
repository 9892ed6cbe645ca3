/**
 * Review and sign-off in the built app: the modeller submits the demo lab's draft audit, the reviewer reads the
 * request in their own caught mail (the lead cannot), follows the link, signs with their password, and the PDF
 * report carries the signature.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFile } from 'node:fs/promises';
import type { BrowserContext } from 'playwright-core';
import { getDocument } from 'pdfjs-dist/legacy/build/pdf.mjs';
import { BASE_URL, openBrowser, shot, signIn } from './browser';

let modeller: BrowserContext;
let lead: BrowserContext;
let reviewer: BrowserContext;
let reviewerInbox: BrowserContext;
let auditUrl = '';
const note = `Please check the futile branch (${Date.now()}).`;

beforeAll(async () => {
	[modeller, lead, reviewer, reviewerInbox] = [await openBrowser(), await openBrowser(), await openBrowser(), await openBrowser()];
});
afterAll(async () => {
	for (const c of [modeller, lead, reviewer, reviewerInbox]) await c?.close();
});

async function pdfText(path: string): Promise<string> {
	const doc = await getDocument({ data: new Uint8Array(await readFile(path)), useSystemFonts: false }).promise;
	let text = '';
	for (let i = 1; i <= doc.numPages; i++) {
		const content = await (await doc.getPage(i)).getTextContent();
		text += content.items.map((item) => ('str' in item ? item.str : '')).join(' ') + '\n';
	}
	return text;
}

describe('review and sign-off', () => {
	it('the modeller submits a draft audit for review with a note', async () => {
		const page = await modeller.newPage();
		await signIn(page, 'tobias.reinholt@kestrel.example');
		await page.waitForURL(/\/labs/);
		await page.goto(`${BASE_URL}/labs/kestrel?q=literature+composite`);
		await page.getByRole('link', { name: 'K-7 literature composite' }).first().click();
		await page.waitForURL(/\/schemes\//);
		await page.getByRole('button', { name: /Run audit/ }).click();
		await page.waitForURL(/\/audits\//);
		auditUrl = page.url();
		await page.locator('textarea[name="note"]').fill(note);
		await page.getByRole('button', { name: 'Submit for review' }).click();
		await expect.poll(async () => page.getByText('Awaiting review').first().isVisible().catch(() => false), { timeout: 15_000 }).toBe(true);
	});

	it('the review request reaches the reviewer through the mail sink, and only the reviewer', async () => {
		const page = await reviewerInbox.newPage();
		await signIn(page, 'priya.castellanos@kestrel.example');
		await page.waitForURL(/\/labs/);
		const auditPath = new URL(auditUrl).pathname;
		await expect
			.poll(
				async () => {
					await page.goto(`${BASE_URL}/mail`);
					return page.locator('article').textContent();
				},
				{ timeout: 30_000, interval: 1000 }
			)
			.toContain(auditPath);
		const body = (await page.locator('article').textContent())!;
		expect(body).toContain('priya.castellanos@kestrel.example');
		expect(body).toContain(note);
		await expect(page.getByRole('note').filter({ hasText: 'not a mail server' }).isVisible()).resolves.toBe(true);
		await shot(page, 'caught-mail');
		// The lab lead reads their own mail only: the review request to the reviewer is not among it.
		const leadPage = await lead.newPage();
		await signIn(leadPage, 'maren.oduya@kestrel.example');
		await leadPage.waitForURL(/\/labs/);
		await leadPage.goto(`${BASE_URL}/mail`);
		expect(await leadPage.locator('main').textContent()).not.toContain(note);
	});

	it('the reviewer opens the link, signs with their password, and the PDF carries the signature', async () => {
		const page = await reviewer.newPage();
		await page.goto(auditUrl);
		await page.waitForURL(/\/signin/);
		await page.getByLabel('E-mail').fill('priya.castellanos@kestrel.example');
		await page.getByLabel('Password').fill('kestrel-demo-2026');
		await page.getByRole('button', { name: 'Sign in' }).click();
		await page.waitForURL(auditUrl);
		await page.locator('textarea[name="comment"]').first().fill('Violation confirmed as entered; signing the record.');
		// The composite has a violating cycle: signing needs the explicit acknowledgement.
		await page.getByLabel(/I acknowledge the violating cycles/).check();
		await page.locator('input[name="password"]').fill('kestrel-demo-2026');
		await page.getByRole('button', { name: 'Sign', exact: true }).click();
		const signed = page.getByRole('note').filter({ hasText: 'Signed by Priya Castellanos' });
		await signed.waitFor({ timeout: 15_000 });
		const hash = (await page.getByText(/^SHA-256 [0-9a-f]{64}$/).first().textContent())!.replace('SHA-256 ', '').trim();
		await shot(page, 'audit-signed');

		const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Report (.pdf)' }).click()]);
		const text = (await pdfText(await download.path())).replace(/\s+/g, ' ');
		expect(text).toContain('Priya Castellanos');
		expect(text).toContain('Violating cycles acknowledged by the signer');
		expect(text).toMatch(/Ed25519/);
		expect(text.replace(/ /g, '')).toContain(hash);
		expect(text).not.toMatch(/Awaiting signature/i);
	});
});
