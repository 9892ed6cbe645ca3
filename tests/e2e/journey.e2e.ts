/**
 * The modeller's main journey in the built app: sign in, upload a rate table with an error and see it located,
 * fix it and upload again, audit, filter the violations, change the load and see the velocity change, export the workbook.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import ExcelJS from 'exceljs';
import type { BrowserContext, Page } from 'playwright-core';
import { BASE_URL, openBrowser, shot, signIn } from './browser';
import { filledTemplate, loadBook, bytesOf, col } from '../fixtures/sheets/build';
import type { SchemeLike } from '../fixtures/sheets/schemes';
import { compositeWithViolation } from '../../src/lib/server/demo/schemes';

let context: BrowserContext;
let page: Page;
const XLSX = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';
// The fixture's scheme type has optional uncertainties where the engine's has nulls; the writer handles both.
const scheme = { ...compositeWithViolation(), stepSizeNm: 8, name: `Journey composite ${Date.now()}` } as unknown as SchemeLike & { name: string };
let schemeUrl = '';
let auditUrl = '';

beforeAll(async () => {
	context = await openBrowser();
	page = await context.newPage();
	await signIn(page, 'tobias.reinholt@kestrel.example');
	await page.waitForURL(/\/labs/);
});
afterAll(async () => {
	await context?.close();
});

/** The filled template with one rate typed as a word, and where that cell is. */
async function brokenWorkbook(): Promise<{ bytes: Buffer; row: number; column: string }> {
	const book = await loadBook(await filledTemplate(scheme));
	const steps = book.getWorksheet('Steps')!;
	const column = col(steps, 'k forward (1/s or 1/(M·s))');
	const row = 3; // the second step
	steps.getCell(row, column).value = 'fast';
	return { bytes: Buffer.from(await bytesOf(book)), row, column: steps.getColumn(column).letter };
}

describe('a modeller audits an uploaded rate table', () => {
	it('shows the import error at its sheet, row and column, and saves nothing', async () => {
		const broken = await brokenWorkbook();
		await page.goto(`${BASE_URL}/labs/kestrel/schemes/new`);
		await page.locator('input[name="sheet"]').setInputFiles({ name: 'k7-composite.xlsx', mimeType: XLSX, buffer: broken.bytes });
		await page.getByRole('button', { name: 'Import and save' }).click();
		const errors = page.getByRole('table', { name: 'Import errors' });
		await errors.waitFor();
		const cells = await errors.locator('tbody tr').first().locator('td').allTextContents();
		expect(cells.slice(1, 4)).toEqual(['Steps', String(broken.row), broken.column]);
		expect(await page.getByText('Nothing was saved').isVisible()).toBe(true);
		await shot(page, 'upload-error');
	});

	it('imports the fixed file and audits it', async () => {
		const fixed = Buffer.from(await filledTemplate(scheme));
		await page.locator('input[name="sheet"]').setInputFiles({ name: 'k7-composite.xlsx', mimeType: XLSX, buffer: fixed });
		await page.getByRole('button', { name: 'Import and save' }).click();
		await page.waitForURL(/\/schemes\/[0-9a-f-]{36}$/);
		schemeUrl = page.url();
		expect(await page.getByRole('heading', { level: 1 }).textContent()).toContain(scheme.name);
		await page.getByRole('button', { name: /Run audit/ }).click();
		await page.waitForURL(/\/audits\/[0-9a-f-]{36}$/);
		auditUrl = page.url();
		expect(await page.getByRole('heading', { level: 1 }).textContent()).toContain('Audit of');
		await shot(page, 'audit');
	});

	it('filters the cycles to the violations', async () => {
		const filters = page.getByRole('group', { name: 'Filter cycles by verdict' });
		await filters.getByRole('button', { name: /violation/ }).click();
		const rows = page.locator('#cycles tbody tr');
		const verdicts = await rows.locator('td:nth-child(3)').allTextContents();
		expect(verdicts.length).toBeGreaterThan(0);
		for (const v of verdicts) expect(v).toContain('violation');
	});

	it('changes the load and sees the velocity change without a reload', async () => {
		await page.goto(schemeUrl);
		const velocity = page.getByTestId('velocity');
		await velocity.waitFor();
		await expect.poll(async () => (await velocity.textContent())?.trim() ?? '', { timeout: 15_000 }).toMatch(/nm\/s/);
		const before = (await velocity.textContent())!.trim();
		const navigations: string[] = [];
		page.on('framenavigated', (f) => navigations.push(f.url()));
		await page.getByLabel('Opposing load in pN').fill('5');
		await expect.poll(async () => (await velocity.textContent())!.trim(), { timeout: 15_000 }).not.toBe(before);
		expect(navigations).toEqual([]);
		await shot(page, 'scheme-load-5pN');
	});

	it('exports the audit workbook', async () => {
		await page.goto(auditUrl);
		const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Workbook (.xlsx)' }).click()]);
		expect(download.suggestedFilename()).toMatch(/\.xlsx$/);
		const book = new ExcelJS.Workbook();
		await book.xlsx.readFile(await download.path());
		const names = book.worksheets.map((w) => w.name);
		expect(names).toEqual(expect.arrayContaining(['Summary', 'Cycles']));
		let mentionsScheme = false;
		book.getWorksheet('Summary')!.eachRow((row) => row.eachCell((cell) => (mentionsScheme ||= String(cell.value).includes(scheme.name))));
		expect(mentionsScheme).toBe(true);
	});

	it('adopts the proposed correction as a new revision, whose audit has no violation', async () => {
		await page.goto(auditUrl);
		await page.getByRole('button', { name: 'Save these rates as a new revision' }).click();
		await page.waitForURL(/\/schemes\/[0-9a-f-]{36}\?saved=2$/);
		expect(await page.getByText(/Revision 2 of 2/).first().isVisible()).toBe(true);
		await page.getByRole('button', { name: /Run audit/ }).click();
		await page.waitForURL(/\/audits\/[0-9a-f-]{36}$/);
		const violations = page.getByRole('group', { name: 'Filter cycles by verdict' }).getByRole('button', { name: /violation/ });
		expect(await violations.textContent()).toMatch(/\b0\s*violation/);
		expect(await violations.isDisabled()).toBe(true);
		await shot(page, 'audit-after-correction');
	});
});
