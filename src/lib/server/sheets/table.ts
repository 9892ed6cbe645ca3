/**
 * Turning a grid of cells (from a worksheet or a CSV) into a SourceTable: find the header row among
 * the first rows, recognise its columns by name, and keep the data rows that have any content.
 * Unknown columns are reported once as a warning and ignored.
 */
import { DIRECTION_COLUMNS, STEP_COLUMNS, matchColumn, splitHeader, type ColumnSpec } from './layout';
import { IssueList, type RawCell, type SourceTable, type TableColumn, type TableRow } from './types';

export interface GridRow {
	row: number;
	cells: RawCell[];
}

const HEADER_SEARCH_ROWS = 20;

export function cellText(cell: RawCell | undefined): string {
	if (!cell) return '';
	const v = cell.value;
	if (v.kind === 'text') return v.text.trim();
	if (v.kind === 'number') return String(v.value);
	return '';
}

/** Score of a row as header: how many distinct specs its cells match. */
function headerScore(row: GridRow, specs: ColumnSpec[]): number {
	const keys = new Set<string>();
	for (const c of row.cells) {
		const spec = matchColumn(cellText(c), specs);
		if (spec) keys.add(spec.key);
	}
	return keys.size;
}

export function findHeaderRow(grid: GridRow[], specs: ColumnSpec[]): number {
	let best = -1;
	let bestScore = 0;
	for (let i = 0; i < Math.min(grid.length, HEADER_SEARCH_ROWS); i++) {
		const s = headerScore(grid[i], specs);
		if (s > bestScore) {
			best = i;
			bestScore = s;
		}
	}
	return bestScore >= Math.min(2, specs.filter((s) => s.required).length || 1) ? best : -1;
}

/**
 * `csv`: a field under no header is an error (in a comma-separated file it is most often a decimal
 * comma that split a number in two); in a workbook it is a warning.
 */
export function buildTable(sheet: string, grid: GridRow[], specs: ColumnSpec[], issues: IssueList, csv = false): SourceTable | null {
	const h = findHeaderRow(grid, specs);
	if (h < 0) return null;
	const header = grid[h];
	const columns: TableColumn[] = [];
	const byIndex = new Map<number, TableColumn>();
	header.cells.forEach((cell, index) => {
		const text = cellText(cell);
		if (text === '') return;
		const spec = matchColumn(text, specs);
		const at = { sheet, row: header.row, column: cell.column };
		if (!spec) {
			issues.warn(at, `Column "${text}" is not one we read; it was ignored. Rename it to one of: ${specs.map((s) => s.header).join(', ')}.`);
			return;
		}
		if (columns.some((c) => c.key === spec.key)) {
			issues.error(at, `Column "${text}" appears twice (also as "${columns.find((c) => c.key === spec.key)!.header}"). Delete or rename one of them.`);
			return;
		}
		const col: TableColumn = { key: spec.key, header: text, unit: splitHeader(text).unit, column: cell.column };
		columns.push(col);
		byIndex.set(index, col);
	});
	const rows: TableRow[] = [];
	for (const r of grid.slice(h + 1)) {
		const cells: Record<string, RawCell> = {};
		let any = false;
		r.cells.forEach((cell, index) => {
			const col = byIndex.get(index);
			const filled = cell.value.kind !== 'empty' && !(cell.value.kind === 'text' && cell.value.text.trim() === '');
			if (!col && filled && cellText(header.cells[index]) === '') {
				const where = { sheet, row: r.row, column: cell.column };
				if (csv) issues.error(where, `This row has a field under no column header ("${cellText(cell)}"). A decimal comma in a comma-separated file splits a number in two: quote such numbers, separate fields with semicolons, or use decimal points.`);
				else issues.warn(where, `The cell "${cellText(cell)}" is under no column header and was ignored. Give the column a header, or clear the cell.`);
			}
			if (!col || col.key === 'note') return;
			cells[col.key] = cell;
			const v = cell.value;
			if (v.kind !== 'empty' && !(v.kind === 'text' && v.text.trim() === '')) any = true;
		});
		if (any) rows.push({ row: r.row, cells });
	}
	return { sheet, headerRow: header.row, columns, rows };
}

/** The better of the two step layouts for this grid: paired rows, or one row per direction. */
export function stepSpecsFor(grid: GridRow[]): ColumnSpec[] {
	const paired = findHeaderRow(grid, STEP_COLUMNS);
	const direction = findHeaderRow(grid, DIRECTION_COLUMNS);
	if (direction < 0) return STEP_COLUMNS;
	if (paired < 0) return DIRECTION_COLUMNS;
	const headerTexts = grid[direction].cells.map((c) => (c.value.kind === 'text' ? c.value.text.toLowerCase() : ''));
	const hasRate = headerTexts.some((t) => /^\s*(rate|k|rate constant)\s*(\(|$)/.test(t));
	const hasForward = headerTexts.some((t) => /forward|fwd|^\s*kf\b/.test(t));
	return hasRate && !hasForward ? DIRECTION_COLUMNS : STEP_COLUMNS;
}

