/**
 * importRateTable: a rate table (.xlsx workbook or .csv) → an engine Scheme, or every problem found,
 * each at its sheet, row and column with what to do. Nothing is returned as a scheme while any error
 * remains. Files over a limit, mislabelled files and zip bombs are refused before parsing
 * (file-guard.ts). Validation is the engine's own (parseScheme); its JSON-path errors are mapped back
 * to the cells the values came from.
 */
import { parseScheme, type Scheme } from '../../engine/index';
import { readCsv } from './read-csv';
import { readXlsx } from './read-xlsx';
import { cellForPath, cellKey, toSchemeJson } from './to-scheme';
import { FileRefused, IssueList, type SheetIssue, type SourceBook } from './types';
import { schemeIdIssues } from '../input-guard';

export type ImportResult =
	| { ok: true; scheme: Scheme; warnings: SheetIssue[] }
	| { ok: false; errors: SheetIssue[]; warnings: SheetIssue[] };

/** What the engine's field names are called on the sheets, for messages. */
const FIELD_WORDS: Record<string, string> = {
	kForward: 'k forward',
	kBackward: 'k backward',
	displacementNm: 'displacement',
	loadFraction: 'load fraction',
	relUncertaintyForward: 'rel. uncertainty forward',
	relUncertaintyBackward: 'rel. uncertainty backward',
	concentrationsM: 'concentrations (Conditions)',
	temperatureK: 'temperature',
	stepSizeNm: 'step size',
	forcePN: 'opposing load',
	deltaG0kJPerMol: "ΔG°'"
};

function sheetWords(message: string): string {
	return message.replace(/\b(kForward|kBackward|displacementNm|loadFraction|relUncertaintyForward|relUncertaintyBackward|concentrationsM|temperatureK|stepSizeNm|forcePN|deltaG0kJPerMol)\b/g, (w) => FIELD_WORDS[w] ?? w);
}

function capitalise(s: string): string {
	return s.charAt(0).toUpperCase() + s.slice(1);
}

export async function importRateTable(bytes: Uint8Array, fileName: string): Promise<ImportResult> {
	const result = await importUncapped(bytes, fileName.slice(0, 200));
	return result.ok
		? { ...result, warnings: result.warnings.map(capEcho) }
		: { ...result, errors: result.errors.map(capEcho), warnings: result.warnings.map(capEcho) };
}

const ECHO_CHARS = 60;
const MESSAGE_CHARS = 600;

/**
 * Messages quote the cell they are about; a 9 MB cell must not come back whole. Quoted text past ECHO_CHARS is cut
 * (saying how long it was), and a message is never longer than MESSAGE_CHARS.
 */
export function capEcho(issue: SheetIssue): SheetIssue {
	// Split on quotes rather than a regular expression: a regex over 9 MB overflows the stack.
	const parts = issue.message.split('"');
	for (let i = 1; i < parts.length - 1; i += 2) {
		if (parts[i].length <= 80) continue;
		parts[i + 1] = ` (${parts[i].length} characters)${parts[i + 1]}`;
		parts[i] = `${parts[i].slice(0, ECHO_CHARS)}…`;
	}
	let message = parts.join('"');
	if (message.length > MESSAGE_CHARS) message = `${message.slice(0, MESSAGE_CHARS)}… (message cut; the cell holds very long text)`;
	return { ...issue, sheet: issue.sheet.slice(0, 200), message };
}

async function importUncapped(bytes: Uint8Array, fileName: string): Promise<ImportResult> {
	const issues = new IssueList();
	const ext = /\.([A-Za-z0-9]+)$/.exec(fileName)?.[1]?.toLowerCase() ?? '';
	try {
		let book: SourceBook;
		if (ext === 'xlsm' || ext === 'xltm' || ext === 'xlam')
			throw new FileRefused({ sheet: fileName, row: null, column: null, message: `Workbooks with macros (.${ext}) are not accepted: every member could download it. Save the rate table as a macro-free .xlsx workbook and upload that.` });
		if (ext === 'xlsx') book = await readXlsx(bytes, fileName, issues);
		else if (ext === 'csv' || ext === 'tsv' || ext === 'txt') book = readCsv(bytes, fileName, issues);
		else if (ext === 'xls' || ext === 'ods' || ext === 'numbers') {
			throw new FileRefused({ sheet: fileName, row: null, column: null, message: `.${ext} files are not read. Save the rate table as .xlsx (or CSV UTF-8) and upload that.` });
		} else {
			throw new FileRefused({ sheet: fileName, row: null, column: null, message: 'Upload a rate table as an .xlsx workbook or a .csv file (the name must end in .xlsx or .csv).' });
		}
		const draft = toSchemeJson(book, issues);
		if (draft.json.steps.length === 0) return { ok: false, errors: sortIssues(issues.errors), warnings: sortIssues(issues.warnings) };
		const parsed = parseScheme(draft.json);
		const hostile = schemeIdIssues(draft.json);
		if (!parsed.ok || hostile.length) {
			const fallback = { sheet: book.steps.sheet, row: null, column: null };
			const seen = new Set<string>();
			for (const e of [...hostile, ...(parsed.ok ? [] : parsed.errors)]) {
				const where = cellForPath(draft, e.path) ?? fallback;
				if (draft.flagged.has(cellKey(where))) continue;
				const message = `${capitalise(sheetWords(e.message))}.`.replace(/\.\.$/, '.');
				const key = `${cellKey(where)}|${message}`;
				if (seen.has(key)) continue;
				seen.add(key);
				issues.error(where, message);
			}
		}
		if (issues.errors.length > 0 || !parsed.ok || hostile.length) {
			return { ok: false, errors: sortIssues(issues.errors), warnings: sortIssues(issues.warnings) };
		}
		return { ok: true, scheme: parsed.scheme, warnings: sortIssues(issues.warnings) };
	} catch (e) {
		if (e instanceof FileRefused) return { ok: false, errors: [e.issue], warnings: sortIssues(issues.warnings) };
		return {
			ok: false,
			errors: [{ sheet: fileName, row: null, column: null, message: `The file could not be read (${(e as Error).message?.slice(0, 160) ?? 'unknown problem'}). Save it again as .xlsx or CSV UTF-8 and upload that; if it keeps failing, send it to us.` }],
			warnings: sortIssues(issues.warnings)
		};
	}
}

function columnOrder(c: string | null): number {
	if (!c) return -1;
	let n = 0;
	for (const ch of c) n = n * 26 + (ch.charCodeAt(0) - 64);
	return n;
}

/** Stable order: by sheet as first met, then row, then column. */
function sortIssues(list: SheetIssue[]): SheetIssue[] {
	const sheetOrder = new Map<string, number>();
	list.forEach((i) => sheetOrder.has(i.sheet) || sheetOrder.set(i.sheet, sheetOrder.size));
	return list
		.map((issue, index) => ({ issue, index }))
		.sort((a, b) =>
			sheetOrder.get(a.issue.sheet)! - sheetOrder.get(b.issue.sheet)! ||
			(a.issue.row ?? -1) - (b.issue.row ?? -1) ||
			columnOrder(a.issue.column) - columnOrder(b.issue.column) ||
			a.index - b.index
		)
		.map((x) => x.issue);
}
