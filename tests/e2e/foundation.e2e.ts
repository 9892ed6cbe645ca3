import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BrowserContext } from 'playwright-core';
import { BASE_URL, openBrowser, shot, signIn } from './browser';

let context: BrowserContext;
beforeAll(async () => {
	context = await openBrowser();
});
afterAll(async () => {
	await context?.close();
});

describe('the built app in chromium', () => {
	it('shows the landing page that says what Escapement does', async () => {
		const page = await context.newPage();
		await page.goto(BASE_URL);
		const heading = await page.getByRole('heading', { level: 1 }).textContent();
		expect(heading).toContain('thermodynamics');
		// The shipped font is served by the app itself, not fetched from the network.
		const fontOk = await page.evaluate(async () => {
			await document.fonts.ready;
			return document.fonts.check('16px "IBM Plex Sans"');
		});
		expect(fontOk).toBe(true);
		await shot(page, 'landing');
		await page.close();
	});

	it('refuses a wrong password without saying which part was wrong', async () => {
		const page = await context.newPage();
		await signIn(page, 'maren.oduya@kestrel.example', 'not-the-password');
		await page.waitForURL(/\/signin/);
		const alert = await page.getByRole('alert').textContent();
		expect(alert).toMatch(/e-mail address and password do not match/);
		await page.close();
	});

	it('signs the lab lead in and lists the lab; another lab answers 404', async () => {
		const page = await context.newPage();
		await signIn(page, 'maren.oduya@kestrel.example');
		await page.waitForURL(/\/labs/);
		expect(await page.getByText('Kestrel Motility Lab').first().isVisible()).toBe(true);
		const other = await page.goto(`${BASE_URL}/labs/brightwater`);
		expect(other?.status()).toBe(404);
		await page.close();
	});

	it('reports the database up on /api/health', async () => {
		const response = await fetch(`${BASE_URL}/api/health`);
		const body = await response.json();
		expect(response.status).toBe(200);
		expect(body.database).toBe('up');
		expect(body.version).toMatch(/^\d+\.\d+\.\d+/);
	});
});

describe('password guessing', () => {
	it('pauses an address after repeated failed sign-ins, and says how long', async () => {
		const anonymous = await openBrowser(); // a browser nobody is signed in to
		const page = await anonymous.newPage();
		// Eight failures are allowed in the window; the ninth attempt is refused before any password check.
		for (let i = 0; i < 8; i++) {
			await signIn(page, 'jun.adeyemi@kestrel.example', `wrong-password-${i}`);
			await page.getByRole('alert').waitFor();
		}
		await signIn(page, 'jun.adeyemi@kestrel.example');
		const alert = await page.getByRole('alert').textContent();
		expect(alert).toMatch(/Too many wrong passwords for this address\. Wait \d+ minutes?/);
		expect(page.url()).toMatch(/\/signin/);
		await anonymous.close();
	});
});
