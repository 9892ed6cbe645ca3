/**
 * Loads a scheme file for the CLI. One reader per file type; the JSON reader is built in, readers for other
 * types (.xlsx, .csv from src/lib/server/sheets/) register through `registerSchemeReader`.
 */
import { readFile } from 'node:fs/promises';
import { basename, extname } from 'node:path';
import { parseScheme, type Scheme, type SchemeError } from '../lib/engine/index';
import { importRateTable, type SheetIssue } from '../lib/server/sheets/index';

/** Turns file bytes into the raw scheme object that parseScheme validates. */
export type SchemeReader = (bytes: Buffer, path: string) => unknown | Promise<unknown>;

const readers = new Map<string, SchemeReader>([
	[
		'.json',
		(bytes, path) => {
			try {
				return JSON.parse(bytes.toString('utf8'));
			} catch (err) {
				throw new SchemeLoadError(path, [{ path: '$', message: `not valid JSON (${(err as Error).message}); fix the syntax` }]);
			}
		}
	]
]);

/** "Steps!D4", "Steps row 4" or the sheet alone: where a spreadsheet problem is. */
export function sheetPlace(issue: SheetIssue): string {
	if (issue.column && issue.row !== null) return `${issue.sheet}!${issue.column}${issue.row}`;
	if (issue.row !== null) return `${issue.sheet} row ${issue.row}`;
	return issue.sheet;
}

/** Rate tables (.xlsx, .csv): warnings go to stderr, errors carry sheet, row and column. */
const rateTableReader: SchemeReader = async (bytes, path) => {
	const result = await importRateTable(new Uint8Array(bytes), basename(path));
	for (const w of result.warnings) process.stderr.write(`warning: ${sheetPlace(w)}: ${w.message}\n`);
	if (!result.ok) throw new SchemeLoadError(path, result.errors.map((e) => ({ path: sheetPlace(e), message: e.message })));
	return result.scheme;
};
readers.set('.xlsx', rateTableReader);
readers.set('.csv', rateTableReader);

export function registerSchemeReader(extension: string, reader: SchemeReader): void {
	readers.set(extension.toLowerCase(), reader);
}

export class SchemeLoadError extends Error {
	constructor(
		readonly file: string,
		readonly errors: SchemeError[]
	) {
		super(`${file}: ${errors.map((e) => `${e.path}: ${e.message}`).join('\n  ')}`);
		this.name = 'SchemeLoadError';
	}
}

export async function loadScheme(path: string): Promise<Scheme> {
	const extension = extname(path).toLowerCase();
	const reader = readers.get(extension);
	if (!reader)
		throw new SchemeLoadError(path, [
			{ path: '$', message: `cannot read "${extension || 'no extension'}" files; use one of ${[...readers.keys()].join(', ')}` }
		]);
	let bytes: Buffer;
	try {
		bytes = await readFile(path);
	} catch (err) {
		throw new SchemeLoadError(path, [{ path: '$', message: `cannot open the file (${(err as NodeJS.ErrnoException).code ?? 'error'}); check the path` }]);
	}
	const parsed = parseScheme(await reader(bytes, path));
	if (!parsed.ok) throw new SchemeLoadError(path, parsed.errors);
	return parsed.scheme;
}
