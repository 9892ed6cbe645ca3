/**
 * How fast the rate-table import accepts a large sheet and refuses bad files (oversized, zip bombs, gigantic sheets).
 * Prints a table; the tests check what is refused, this shows how fast. Run with `npm run bench`.
 */
import { deflateRawSync } from 'node:zlib';
import { importRateTable } from '../src/lib/server/sheets/import';
import { LIMITS } from '../src/lib/server/sheets/layout';
import { WORKBOOK_XML, ringWorkbook, zip } from '../tests/fixtures/sheets/build';

function lyingBomb(): Uint8Array {
	const payload = deflateRawSync(Buffer.alloc(48 * 1024 * 1024, 0x20));
	const bytes = zip([
		{ name: 'xl/workbook.xml', data: WORKBOOK_XML },
		{ name: 'xl/worksheets/sheet1.xml', data: payload, store: true, claimedSize: 2048 }
	]);
	const view = Buffer.from(bytes.buffer);
	view.writeUInt16LE(8, view.lastIndexOf(Buffer.from([0x50, 0x4b, 0x01, 0x02])) + 10);
	view.writeUInt16LE(8, view.indexOf(Buffer.from('xl/worksheets/sheet1.xml')) - 30 + 8);
	return new Uint8Array(view);
}

const tallRows = LIMITS.rowsPerSheet + 500;
const cases: [string, string, () => Promise<Uint8Array> | Uint8Array][] = [
	[`file over ${LIMITS.fileBytes / 1048576} MB`, 'huge.csv', () => new Uint8Array(LIMITS.fileBytes + 1).fill(0x41)],
	['zip bomb, true size in directory (900 MB)', 'bomb.xlsx', () => zip([{ name: 'xl/workbook.xml', data: WORKBOOK_XML }, { name: 'xl/worksheets/sheet1.xml', data: Buffer.alloc(0), claimedSize: 900 * 1024 * 1024 }])],
	['zip bomb lying about its size (48 MB)', 'liar.xlsx', lyingBomb],
	[`sheet of ${tallRows} rows`, 'tall.xlsx', () => zip([{ name: 'xl/workbook.xml', data: WORKBOOK_XML }, { name: 'xl/worksheets/sheet1.xml', data: Buffer.from('<worksheet><sheetData>' + Array.from({ length: tallRows }, (_, i) => `<row r="${i + 1}"><c r="A${i + 1}"><v>1</v></c></row>`).join('') + '</sheetData></worksheet>') }])],
	[`${LIMITS.steps}-step workbook (accepted)`, 'ring.xlsx', () => ringWorkbook(LIMITS.steps)],
	[`${LIMITS.steps + 1}-step workbook`, 'ring.xlsx', () => ringWorkbook(LIMITS.steps + 1)]
];

console.log('\nRate-table import: time to accept or refuse (median of 3)\n');
console.log(`${'file'.padEnd(44)} ${'size'.padStart(10)} ${'result'.padStart(9)} ${'ms'.padStart(9)}`);
for (const [label, name, make] of cases) {
	const bytes = await make();
	const times: number[] = [];
	let outcome = '';
	for (let i = 0; i < 3; i++) {
		const t0 = performance.now();
		const r = await importRateTable(bytes, name);
		times.push(performance.now() - t0);
		outcome = r.ok ? 'accepted' : 'refused';
	}
	times.sort((a, b) => a - b);
	const size = bytes.length >= 1048576 ? `${(bytes.length / 1048576).toFixed(1)} MB` : `${(bytes.length / 1024).toFixed(0)} kB`;
	console.log(`${label.padEnd(44)} ${size.padStart(10)} ${outcome.padStart(9)} ${times[1].toFixed(1).padStart(9)}`);
}
