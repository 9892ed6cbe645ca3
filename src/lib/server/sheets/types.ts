/**
 * Shared shapes of the spreadsheet import: where a value came from, and how a problem is reported.
 * A SheetIssue always names the sheet (or the CSV file), the 1-based row and the column letter when
 * they are known, and a message that says what to do.
 */

export interface SheetIssue {
	sheet: string;
	row: number | null;
	column: string | null;
	message: string;
}

/** Where a value sits in the source file. */
export interface CellRef {
	sheet: string;
	row: number | null;
	column: string | null;
}

/** A cell's content, already unwrapped from the spreadsheet's representation. */
export type RawValue =
	| { kind: 'empty' }
	| { kind: 'number'; value: number }
	| { kind: 'text'; text: string }
	| { kind: 'bool'; value: boolean }
	| { kind: 'date'; value: Date }
	| { kind: 'error'; text: string }
	| { kind: 'formula-without-result'; formula: string };

export interface RawCell {
	value: RawValue;
	/** Column letter in a workbook; in a CSV the letter of the field (A = first field). */
	column: string | null;
	/** True when the value is the cached result of a formula. */
	fromFormula?: boolean;
}

export interface TableColumn {
	key: string;
	header: string;
	/** The text inside the header's parentheses, e.g. "1/s or 1/(µM·s)". */
	unit: string | null;
	column: string | null;
}

export interface TableRow {
	row: number;
	cells: Record<string, RawCell>;
}

/** One table read from a sheet or a CSV: recognised columns and the non-empty data rows. */
export interface SourceTable {
	sheet: string;
	headerRow: number | null;
	columns: TableColumn[];
	rows: TableRow[];
}

/** Everything read from a file, before it is turned into a scheme. */
export interface SourceBook {
	fileName: string;
	conditions: SourceTable | null;
	states: SourceTable | null;
	reactions: SourceTable | null;
	steps: SourceTable;
	/** paired: one row per reversible step; direction: one row per direction, paired on import. */
	stepsLayout: 'paired' | 'direction';
}

export class IssueList {
	readonly errors: SheetIssue[] = [];
	readonly warnings: SheetIssue[] = [];

	error(at: CellRef, message: string): void {
		this.errors.push({ sheet: at.sheet, row: at.row, column: at.column, message });
	}

	warn(at: CellRef, message: string): void {
		this.warnings.push({ sheet: at.sheet, row: at.row, column: at.column, message });
	}
}

/** Thrown to refuse a whole file at once (wrong type, over a limit); carries one issue. */
export class FileRefused extends Error {
	constructor(readonly issue: SheetIssue) {
		super(issue.message);
		this.name = 'FileRefused';
	}
}

export function cellName(at: CellRef): string {
	if (at.column && at.row != null) return `${at.column}${at.row}`;
	if (at.row != null) return `row ${at.row}`;
	if (at.column) return `column ${at.column}`;
	return at.sheet;
}

export function columnLetter(index0: number): string {
	let n = index0 + 1;
	let s = '';
	while (n > 0) {
		const r = (n - 1) % 26;
		s = String.fromCharCode(65 + r) + s;
		n = Math.floor((n - 1) / 26);
	}
	return s;
}
