/** Shared set-up of the browser tests: one chromium per file, a fresh profile, screenshots into test-results/. */
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { mkdtempSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export const BASE_URL = process.env.E2E_BASE_URL ?? 'http://127.0.0.1:5190';
export const SHOTS = new URL('../../test-results/screenshots/', import.meta.url).pathname;
export const DEMO_PASSWORD = 'kestrel-demo-2026';

const ARGS = [
	'--headless',
	'--no-sandbox',
	'--disable-gpu',
	'--disable-quic',
	'--no-first-run',
	'--disable-background-networking',
	'--disable-component-update',
	'--disable-sync',
	'--disable-dev-shm-usage'
];

export async function openBrowser(): Promise<BrowserContext> {
	mkdirSync(SHOTS, { recursive: true });
	const profile = mkdtempSync(join(tmpdir(), 'escapement-e2e-'));
	const context = await chromium.launchPersistentContext(profile, {
		executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
		args: ARGS,
		viewport: { width: 1400, height: 900 },
		acceptDownloads: true
	});
	context.setDefaultTimeout(20_000);
	return context;
}

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD): Promise<void> {
	await page.goto(`${BASE_URL}/signin`);
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in' }).click();
}

export async function shot(page: Page, name: string): Promise<void> {
	await page.screenshot({ path: join(SHOTS, `${name}.png`), fullPage: true });
}
