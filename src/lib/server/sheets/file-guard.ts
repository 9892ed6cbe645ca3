/**
 * Refusing a file before any parser sees it: size, what the bytes really are (magic numbers), and for
 * workbooks the zip container itself.
 *
 * A zip states every entry's sizes in its central directory, but a hostile file can lie, so each entry
 * is also inflated here with node:zlib's maxOutputLength set to the size it claims: a bomb stops after
 * at most LIMITS.unzippedBytes in total, in well under a second, instead of filling the server's memory
 * inside the workbook parser. Worksheets are then counted (rows, cells) by scanning their XML, so a
 * gigantic sheet is refused before it is parsed into objects. Cost: O(unzipped bytes), once.
 * Zip format: PKWARE APPNOTE.TXT (end of central directory 0x06054b50, central header 0x02014b50,
 * local header 0x04034b50).
 */
import { inflateRawSync } from 'node:zlib';
import { LIMITS } from './layout';
import { FileRefused } from './types';

function refuse(fileName: string, message: string): never {
	throw new FileRefused({ sheet: fileName, row: null, column: null, message });
}

const MB = (n: number) => `${(n / 1024 / 1024).toFixed(n < 1024 * 1024 ? 2 : 1)} MB`;

export function checkSize(bytes: Uint8Array, fileName: string): void {
	if (bytes.length > LIMITS.fileBytes) {
		refuse(fileName, `The file is ${MB(bytes.length)}; the limit is ${MB(LIMITS.fileBytes)}. Remove sheets or rows that are not part of the scheme and upload again.`);
	}
	if (bytes.length === 0) refuse(fileName, 'The file is empty. Upload the saved workbook or CSV file.');
}

function startsWith(bytes: Uint8Array, magic: number[]): boolean {
	return magic.every((b, i) => bytes[i] === b);
}

const ZIP = [0x50, 0x4b, 0x03, 0x04];
const EMPTY_ZIP = [0x50, 0x4b, 0x05, 0x06];
const OLE = [0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1];
const PDF = [0x25, 0x50, 0x44, 0x46];

/** What the bytes look like, for messages. */
export function sniff(bytes: Uint8Array): 'zip' | 'ole' | 'pdf' | 'utf16' | 'binary' | 'text' {
	if (startsWith(bytes, ZIP) || startsWith(bytes, EMPTY_ZIP)) return 'zip';
	if (startsWith(bytes, OLE)) return 'ole';
	if (startsWith(bytes, PDF)) return 'pdf';
	if ((bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff)) return 'utf16';
	const n = Math.min(bytes.length, 8192);
	for (let i = 0; i < n; i++) if (bytes[i] === 0) return 'binary';
	return 'text';
}

export interface ZipEntry {
	name: string;
	data: Buffer;
}

/** Check a workbook's zip container and return its inflated entries (names and bytes). */
export function checkXlsxContainer(bytes: Uint8Array, fileName: string): ZipEntry[] {
	const kind = sniff(bytes);
	if (kind === 'ole') refuse(fileName, 'This is an old-style binary workbook (.xls) or an encrypted workbook. Open it in a spreadsheet program, save it as .xlsx without a password, and upload that.');
	if (kind !== 'zip') {
		const what = kind === 'pdf' ? 'a PDF document' : kind === 'text' || kind === 'utf16' ? 'a text file (perhaps a CSV)' : 'not a workbook';
		refuse(fileName, `The file is named .xlsx but is ${what}. Save the workbook as .xlsx (or give a CSV file the .csv ending) and upload again.`);
	}
	const buf = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.length);
	const damaged = (): never => refuse(fileName, 'The workbook is damaged (its zip directory cannot be read). Open it in a spreadsheet program, save it again as .xlsx, and upload that.');

	// End of central directory: within the last 22 + 65535 bytes.
	let eocd = -1;
	for (let i = buf.length - 22; i >= Math.max(0, buf.length - 22 - 0xffff); i--) {
		if (buf.readUInt32LE(i) === 0x06054b50) {
			eocd = i;
			break;
		}
	}
	if (eocd < 0) damaged();
	const count = buf.readUInt16LE(eocd + 10);
	const cdSize = buf.readUInt32LE(eocd + 12);
	const cdOffset = buf.readUInt32LE(eocd + 16);
	if (count === 0xffff || cdOffset === 0xffffffff) {
		refuse(fileName, 'The workbook uses the large-file zip format, which a rate table never needs. Save it again as .xlsx and upload that.');
	}
	if (count > LIMITS.zipEntries) refuse(fileName, `The workbook holds ${count} parts; the limit is ${LIMITS.zipEntries}. Save only the rate-table sheets in a new workbook.`);
	if (cdOffset + cdSize > buf.length) damaged();

	interface Central { name: string; method: number; flags: number; compressed: number; size: number; local: number }
	const central: Central[] = [];
	let claimed = 0;
	let p = cdOffset;
	for (let i = 0; i < count; i++) {
		if (p + 46 > buf.length || buf.readUInt32LE(p) !== 0x02014b50) damaged();
		const flags = buf.readUInt16LE(p + 8);
		const method = buf.readUInt16LE(p + 10);
		const compressed = buf.readUInt32LE(p + 20);
		const size = buf.readUInt32LE(p + 24);
		const nameLen = buf.readUInt16LE(p + 28);
		const extraLen = buf.readUInt16LE(p + 30);
		const commentLen = buf.readUInt16LE(p + 32);
		const local = buf.readUInt32LE(p + 42);
		const name = buf.toString('utf8', p + 46, p + 46 + nameLen);
		p += 46 + nameLen + extraLen + commentLen;
		if (flags & 1) refuse(fileName, 'The workbook is encrypted. Remove the password, save it as .xlsx, and upload again.');
		if (size === 0xffffffff || compressed === 0xffffffff) refuse(fileName, 'The workbook uses the large-file zip format, which a rate table never needs. Save it again as .xlsx.');
		claimed += size;
		if (claimed > LIMITS.unzippedBytes) {
			refuse(fileName, `The workbook would unpack to more than ${MB(LIMITS.unzippedBytes)} (a "zip bomb" or an enormous sheet). Save only the rate-table sheets in a new workbook and upload that.`);
		}
		if (size > 1024 * 1024 && size / Math.max(compressed, 1) > LIMITS.compressionRatio) {
			refuse(fileName, `The part ${name} unpacks to ${Math.round(size / Math.max(compressed, 1))} times its packed size, which only a "zip bomb" or a sheet of repeated filler does. Save only the rate-table sheets in a new workbook and upload that.`);
		}
		if (method !== 0 && method !== 8) refuse(fileName, `The workbook part ${name} uses an unusual compression (method ${method}). Save it again as .xlsx from a spreadsheet program.`);
		central.push({ name, method, flags, compressed, size, local });
	}

	const entries: ZipEntry[] = [];
	for (const c of central) {
		if (c.local + 30 > buf.length || buf.readUInt32LE(c.local) !== 0x04034b50) damaged();
		const start = c.local + 30 + buf.readUInt16LE(c.local + 26) + buf.readUInt16LE(c.local + 28);
		if (start + c.compressed > buf.length) damaged();
		const packed = buf.subarray(start, start + c.compressed);
		let data: Buffer = packed;
		if (c.method !== 0) {
			try {
				data = inflateRawSync(packed, { maxOutputLength: Math.max(c.size, 1) });
			} catch (e) {
				if (e instanceof RangeError || (e as { code?: string }).code === 'ERR_BUFFER_TOO_LARGE') {
					refuse(fileName, `The workbook part ${c.name} unpacks to more than the size its zip directory states: the file is a "zip bomb" or damaged. It was not opened.`);
				}
				damaged();
			}
		}
		if (data.length !== c.size) damaged();
		entries.push({ name: c.name, data });
	}

	// A workbook renamed from .xlsm still carries its macros: refuse it whatever its name says.
	const types = entries.find((e) => e.name === '[Content_Types].xml')?.data.toString('utf8') ?? '';
	if (entries.some((e) => /(^|\/)vbaProject\.bin$/i.test(e.name)) || /macroEnabled/i.test(types)) {
		refuse(fileName, 'The workbook contains macros (a VBA project). Macros are not accepted: every member could download the file. Save the rate table as a macro-free .xlsx workbook and upload that.');
	}
	if (!entries.some((e) => e.name === 'xl/workbook.xml')) {
		refuse(fileName, 'The file is a zip archive but not an .xlsx workbook (it has no xl/workbook.xml). Save the rate table from a spreadsheet program as .xlsx.');
	}
	let cells = 0;
	for (const e of entries) {
		if (!/^xl\/worksheets\/[^/]+\.xml$/.test(e.name)) continue;
		const xml = e.data.toString('latin1');
		const rows = countOccurrences(xml, '<row ') + countOccurrences(xml, '<row>');
		if (rows > LIMITS.rowsPerSheet) {
			refuse(fileName, `A sheet (${e.name.slice(14)}) has ${rows} rows; the limit is ${LIMITS.rowsPerSheet} (${LIMITS.steps} steps). Delete unused rows, or split the scheme.`);
		}
		cells += countOccurrences(xml, '<c ') + countOccurrences(xml, '<c>');
		if (cells > LIMITS.cellsPerWorkbook) {
			refuse(fileName, `The workbook has more than ${LIMITS.cellsPerWorkbook} filled cells, far more than a rate table of ${LIMITS.steps} steps needs. Delete unused rows, columns and sheets, and upload again.`);
		}
	}
	return entries;
}

function countOccurrences(text: string, needle: string): number {
	let n = 0;
	for (let i = text.indexOf(needle); i >= 0; i = text.indexOf(needle, i + needle.length)) n++;
	return n;
}
