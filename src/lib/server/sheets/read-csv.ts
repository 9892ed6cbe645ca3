/**
 * Reading a rate table from CSV (papaparse). A CSV holds one table, the steps, in either layout.
 * Conditions, states and reference reactions may precede it as comment lines of the form
 *
 *   # temperature: 25 °C
 *   # opposing load: 2 pN
 *   # step size: 8 nm
 *   # [ATP]: 1 mM
 *   # reaction: ATP hydrolysis | ATP → ADP + Pi | -30.5 kJ/mol
 *   # state: D1 | both heads bound, ADP on the rear head
 *   # scheme name: KX-2 forward cycle
 *
 * Without them the defaults hold (25 °C, no load, no species). Separators ",", ";" or tab are detected.
 * Rows are numbered as lines of the file and columns lettered A, B, … like a spreadsheet shows them.
 */
import Papa from 'papaparse';
import { checkSize, sniff } from './file-guard';
import { DIRECTION_COLUMNS, LIMITS } from './layout';
import { buildTable, stepSpecsFor, type GridRow } from './table';
import { FileRefused, IssueList, columnLetter, type RawCell, type SourceBook, type SourceTable, type TableRow } from './types';

function refuse(fileName: string, message: string): never {
	throw new FileRefused({ sheet: fileName, row: null, column: null, message });
}

/** Split "25 °C" / "1.5e-3 M" / "2 × 10^-6 M" into the number's text and the unit. */
export function splitQuantity(text: string): { number: string; unit: string | null } {
	const m = /^\s*([+\-\u2212]?[0-9.,]+(?:\s*[eE]\s*[+\-\u2212]?\d+|\s*[×xX·*]\s*10\s*\^\s*\(?[+\-\u2212]?\d+\)?|\s*[×xX·*]\s*10[⁻⁺]?[⁰¹²³⁴⁵⁶⁷⁸⁹]+)?%?)\s*(.*)$/.exec(text);
	if (!m) return { number: text.trim(), unit: null };
	const unit = m[2].trim();
	return { number: m[1], unit: unit === '' ? null : unit };
}

const text = (t: string, column: string | null = null): RawCell => ({ value: t.trim() === '' ? { kind: 'empty' } : { kind: 'text', text: t.trim() }, column });

function emptyTable(sheet: string, keys: string[]): SourceTable {
	return { sheet, headerRow: null, columns: keys.map((key) => ({ key, header: key, unit: null, column: null })), rows: [] };
}

export function readCsv(bytes: Uint8Array, fileName: string, issues: IssueList): SourceBook {
	checkSize(bytes, fileName);
	const kind = sniff(bytes);
	if (kind === 'zip') refuse(fileName, 'The file is named .csv but is a workbook (.xlsx). Rename it to end in .xlsx, or save it as CSV, and upload again.');
	if (kind === 'ole') refuse(fileName, 'The file is named .csv but is an old-style binary workbook (.xls). Save it as CSV (UTF-8) or .xlsx and upload that.');
	if (kind === 'pdf') refuse(fileName, 'The file is named .csv but is a PDF document. Upload the rate table as CSV or .xlsx.');
	if (kind === 'utf16') refuse(fileName, 'The CSV is saved as UTF-16 text. Save it as "CSV UTF-8" and upload again.');
	if (kind === 'binary') refuse(fileName, 'The file is named .csv but is not text (it holds binary bytes). Save the rate table as CSV (UTF-8) or .xlsx.');
	let content: string;
	try {
		content = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
	} catch {
		refuse(fileName, 'The CSV is not UTF-8 text (perhaps Latin-1 or Windows-1252, which would garble µ and °). Save it as "CSV UTF-8" and upload again.');
	}
	if (content.charCodeAt(0) === 0xfeff) content = content.slice(1);

	const lines = content.split(/\r\n|\n|\r/);
	if (lines.length > LIMITS.rowsPerSheet + 200) {
		refuse(fileName, `The CSV has ${lines.length} lines; the limit is ${LIMITS.rowsPerSheet} rows (${LIMITS.steps} steps). Remove rows that are not steps, or split the scheme.`);
	}

	const conditions: SourceTable = emptyTable(fileName, ['name', 'value', 'unit']);
	const states: SourceTable = emptyTable(fileName, ['id', 'label']);
	const reactions: SourceTable = emptyTable(fileName, ['id', 'equation', 'deltaG', 'unit']);
	let bodyStart = 0;
	for (; bodyStart < lines.length; bodyStart++) {
		// A spreadsheet program may have quoted the comment line or padded it with separators.
		let line = lines[bodyStart].trim().replace(/[,;\t]+$/, '').trim();
		if (/^".*"$/.test(line)) line = line.slice(1, -1).replace(/""/g, '"').trim();
		if (line === '') continue;
		if (!line.startsWith('#')) break;
		const row = bodyStart + 1;
		const body = line.replace(/^#+/, '').trim();
		if (body === '') continue;
		const colon = body.indexOf(':');
		if (colon < 0) continue; // a plain comment
		const key = body.slice(0, colon).trim();
		const value = body.slice(colon + 1).trim();
		const lower = key.toLowerCase();
		if (lower === 'reaction') {
			const parts = value.split('|').map((s) => s.trim());
			if (parts.length !== 3) {
				issues.error({ sheet: fileName, row, column: null }, `A reaction line needs three parts separated by "|": name | equation | ΔG°' with unit, e.g. "# reaction: ATP hydrolysis | ATP → ADP + Pi | -30.5 kJ/mol".`);
				continue;
			}
			const q = splitQuantity(parts[2]);
			reactions.rows.push({ row, cells: { id: text(parts[0]), equation: text(parts[1]), deltaG: text(q.number), unit: text(q.unit ?? '') } });
		} else if (lower === 'state') {
			const [id, ...label] = value.split('|');
			states.rows.push({ row, cells: { id: text(id), label: text(label.join('|')) } });
		} else if (lower === 'scheme name' || lower === 'scheme' || lower === 'name') {
			conditions.rows.push({ row, cells: { name: text('scheme name'), value: text(value) } });
		} else {
			const q = splitQuantity(value);
			conditions.rows.push({ row, cells: { name: text(key), value: text(q.number), unit: text(q.unit ?? '') } });
		}
	}

	const bodyText = lines.slice(bodyStart).join('\n');
	const grid: GridRow[] = [];
	const lineStarts: number[] = [0];
	for (let i = 0; i < bodyText.length; i++) if (bodyText.charCodeAt(i) === 10) lineStarts.push(i + 1);
	const lineOf = (offset: number) => {
		let lo = 0;
		let hi = lineStarts.length - 1;
		while (lo < hi) {
			const mid = (lo + hi + 1) >> 1;
			if (lineStarts[mid] <= offset) lo = mid;
			else hi = mid - 1;
		}
		return bodyStart + lo + 1;
	};
	let cursor = 0;
	let tooWide = false;
	Papa.parse<string[]>(bodyText, {
		delimitersToGuess: [',', ';', '\t'],
		skipEmptyLines: false,
		step: (result) => {
			const start = cursor;
			cursor = result.meta.cursor;
			const fields = result.data;
			if (fields.length > 64) tooWide = true;
			if (fields.every((f) => f.trim() === '')) return;
			// Skip the separator that ended the previous row.
			let s = start;
			while (s < bodyText.length && (bodyText[s] === '\n' || bodyText[s] === '\r')) s++;
			grid.push({ row: lineOf(s), cells: fields.slice(0, 64).map((f, i) => text(f, columnLetter(i))) });
		}
	});
	if (tooWide) issues.warn({ sheet: fileName, row: null, column: null }, 'Some rows have more than 64 fields; fields after the 64th were ignored.');
	if (grid.length === 0) refuse(fileName, 'The CSV has no table. Put a header row (from state, to state, k forward …, k backward …) and one row per step.');

	const specs = stepSpecsFor(grid);
	const steps = buildTable(fileName, grid, specs, issues, true);
	if (!steps) {
		throw new FileRefused({ sheet: fileName, row: grid[0].row, column: null, message: 'No header row with "from state", "to state" and rate columns was found. The first row after the # lines must name the columns (see the Read me sheet of the template).' });
	}
	if (steps.rows.length === 0) {
		issues.error({ sheet: fileName, row: (steps.headerRow ?? 0) + 1, column: null }, 'The CSV has a header row but no steps below it. Add one row per step.');
	}
	const hasAny = (t: SourceTable) => (t.rows.length > 0 ? t : null);
	return {
		fileName,
		conditions: hasAny(conditions),
		states: hasAny(states),
		reactions: hasAny(reactions),
		steps: steps as SourceTable & { rows: TableRow[] },
		stepsLayout: specs === DIRECTION_COLUMNS ? 'direction' : 'paired'
	};
}
