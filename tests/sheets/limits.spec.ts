import { deflateRawSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { importRateTable } from '../../src/lib/server/sheets/import';
import { LIMITS } from '../../src/lib/server/sheets/layout';
import { WORKBOOK_XML, filledTemplate, ringWorkbook, zip } from '../fixtures/sheets/build';
import { VESSEL3 } from '../fixtures/sheets/schemes';

function refusal(r: Awaited<ReturnType<typeof importRateTable>>) {
	expect(r.ok).toBe(false);
	if (r.ok) throw new Error('accepted');
	expect(r.errors).toHaveLength(1);
	return r.errors[0];
}

// How fast each refusal is: `npm run bench` (scripts/bench-import.ts) prints the table; tests assert what, not how fast.
describe('files over a limit, mislabelled files and bombs are refused before parsing', () => {
	it(`a file over ${LIMITS.fileBytes / 1048576} MB is refused before reading`, async () => {
		const big = new Uint8Array(LIMITS.fileBytes + 1).fill(0x41);
		const result = await importRateTable(big, 'huge.csv');
		expect(refusal(result).message).toMatch(/limit is 10\.0 MB/);
	});

	it('a zip bomb whose directory states its true size is refused from the directory alone', async () => {
		const parts = [
			{ name: 'xl/workbook.xml', data: WORKBOOK_XML },
			{ name: 'xl/worksheets/sheet1.xml', data: Buffer.alloc(0), claimedSize: 900 * 1024 * 1024 }
		];
		const result = await importRateTable(zip(parts), 'bomb.xlsx');
		expect(refusal(result).message).toMatch(/zip bomb/);
	});

	it('a zip bomb that lies about its size stops inflating at the stated size', async () => {
		const payload = deflateRawSync(Buffer.alloc(48 * 1024 * 1024, 0x20));
		const bytes = zip([
			{ name: 'xl/workbook.xml', data: WORKBOOK_XML },
			{ name: 'xl/worksheets/sheet1.xml', data: payload, store: true, claimedSize: 2048 }
		]);
		// the part is stored as already-deflated bytes; mark it deflated so a reader inflates it
		const view = Buffer.from(bytes.buffer);
		const cd = view.lastIndexOf(Buffer.from([0x50, 0x4b, 0x01, 0x02]));
		view.writeUInt16LE(8, cd + 10);
		const local = view.indexOf(Buffer.from('xl/worksheets/sheet1.xml')) - 30;
		view.writeUInt16LE(8, local + 8);
		const result = await importRateTable(new Uint8Array(view), 'liar.xlsx');
		expect(refusal(result).message).toMatch(/more than the size its zip directory states/);
	});

	it('an entry packed far beyond any spreadsheet ratio is refused', async () => {
		const filler = Buffer.alloc(20 * 1024 * 1024, 0x20);
		const bytes = zip([
			{ name: 'xl/workbook.xml', data: WORKBOOK_XML },
			{ name: 'xl/worksheets/sheet1.xml', data: filler }
		]);
		const result = await importRateTable(bytes, 'ratio.xlsx');
		expect(refusal(result).message).toMatch(/times its packed size/);
	});

	it('a gigantic sheet is refused before it is parsed', async () => {
		const rows = LIMITS.rowsPerSheet + 500;
		const xml = '<worksheet><sheetData>' + Array.from({ length: rows }, (_, i) => `<row r="${i + 1}"><c r="A${i + 1}"><v>1</v></c></row>`).join('') + '</sheetData></worksheet>';
		const bytes = zip([
			{ name: 'xl/workbook.xml', data: WORKBOOK_XML },
			{ name: 'xl/worksheets/sheet1.xml', data: Buffer.from(xml) }
		]);
		const result = await importRateTable(bytes, 'tall.xlsx');
		expect(refusal(result).message).toMatch(new RegExp(`${rows} rows; the limit is ${LIMITS.rowsPerSheet}`));
	});

	it(`${LIMITS.steps} steps import; ${LIMITS.steps + 1} are refused`, async () => {
		const ok = await ringWorkbook(LIMITS.steps);
		const result = await importRateTable(ok, 'ring.xlsx');
		expect(result.ok).toBe(true);
		if (result.ok) expect(result.scheme.steps).toHaveLength(LIMITS.steps);
		const over = await importRateTable(await ringWorkbook(LIMITS.steps + 1), 'ring.xlsx');
		expect(refusal(over).message).toMatch(/5001 steps; the limit is 5000/);
	});

	it('a CSV with more lines than any allowed table is refused before parsing', async () => {
		const csv = 'from state,to state,k forward (1/s),k backward (1/s)\n' + 'A,B,1,1\n'.repeat(LIMITS.rowsPerSheet + 300);
		const result = await importRateTable(new TextEncoder().encode(csv), 'long.csv');
		expect(refusal(result).message).toMatch(/limit is/);
	});

	it.each([
		['a text file named .xlsx', () => new TextEncoder().encode('from state,to state\nA,B'), 'x.xlsx', /is a text file/],
		['an old .xls (OLE) named .xlsx', () => new Uint8Array([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1, 0, 0, 0, 0]), 'x.xlsx', /old-style binary workbook/],
		['a PDF named .xlsx', () => new TextEncoder().encode('%PDF-1.7\n...'), 'x.xlsx', /is a PDF/],
		['a zip that is no workbook', () => zip([{ name: 'readme.txt', data: Buffer.from('hello') }]), 'x.xlsx', /no xl\/workbook\.xml/],
		['a workbook named .csv', () => zip([{ name: 'xl/workbook.xml', data: WORKBOOK_XML }]), 'x.csv', /is a workbook/],
		['UTF-16 text named .csv', () => new Uint8Array([0xff, 0xfe, 0x41, 0x00]), 'x.csv', /UTF-16/],
		['Latin-1 text named .csv', () => new Uint8Array([0x41, 0x2c, 0xb5, 0x4d, 0x0a]), 'x.csv', /not UTF-8/],
		['binary bytes named .csv', () => new Uint8Array([0x41, 0x00, 0x42]), 'x.csv', /not text/],
		['an empty file', () => new Uint8Array(0), 'x.xlsx', /empty/],
		['an unknown ending', () => new Uint8Array([1, 2, 3]), 'x.ods', /\.ods files are not read/],
		['a truncated workbook', () => zip([{ name: 'xl/workbook.xml', data: WORKBOOK_XML }]).slice(0, 40), 'x.xlsx', /damaged/]
	])('%s is refused with a message that says what it is', async (_name, make, fileName, message) => {
		const e = refusal(await importRateTable(make(), fileName));
		expect(e.message).toMatch(message);
		expect(e.sheet).toBe(fileName);
	});

	it('a real workbook is not mistaken for a bomb', async () => {
		const r = await importRateTable(await filledTemplate(VESSEL3), 'fine.xlsx');
		expect(r.ok).toBe(true);
	});
});
