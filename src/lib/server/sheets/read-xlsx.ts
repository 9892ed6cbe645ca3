/**
 * Reading a rate-table workbook (.xlsx) into a SourceBook: the Conditions, States, Reactions and Steps
 * sheets of the template, or any workbook whose sheet has "from state" and "to state" columns.
 * The container is checked first (file-guard.ts); exceljs then parses it. Formula cells give their
 * cached result (exceljs keeps it in `result`); a formula without one is passed on and reported.
 */
import ExcelJS from 'exceljs';
import { checkSize, checkXlsxContainer } from './file-guard';
import { CONDITION_COLUMNS, DIRECTION_COLUMNS, EXAMPLE_PREFIX, REACTION_COLUMNS, SHEETS, STATE_COLUMNS, STEP_COLUMNS, type ColumnSpec } from './layout';
import { buildTable, findHeaderRow, stepSpecsFor, type GridRow } from './table';
import { FileRefused, IssueList, columnLetter, type RawValue, type SourceBook, type SourceTable } from './types';

function toRaw(value: ExcelJS.CellValue): { value: RawValue; fromFormula?: boolean } {
	if (value === null || value === undefined) return { value: { kind: 'empty' } };
	if (typeof value === 'number') return { value: { kind: 'number', value } };
	if (typeof value === 'string') return { value: { kind: 'text', text: value } };
	if (typeof value === 'boolean') return { value: { kind: 'bool', value } };
	if (value instanceof Date) return { value: { kind: 'date', value } };
	const v = value as unknown as Record<string, unknown>;
	if ('formula' in v || 'sharedFormula' in v) {
		const result = v.result as ExcelJS.CellValue | undefined;
		const formula = String(v.formula ?? v.sharedFormula ?? '');
		if (result === undefined || result === null || (typeof result === 'string' && result === '' && formula !== '')) {
			return { value: { kind: 'formula-without-result', formula }, fromFormula: true };
		}
		return { ...toRaw(result), fromFormula: true };
	}
	if ('richText' in v && Array.isArray(v.richText)) {
		return { value: { kind: 'text', text: (v.richText as { text: string }[]).map((t) => t.text).join('') } };
	}
	if ('error' in v) return { value: { kind: 'error', text: String(v.error) } };
	if ('text' in v) return toRaw(v.text as ExcelJS.CellValue);
	return { value: { kind: 'error', text: 'an unreadable value' } };
}

function gridOf(ws: ExcelJS.Worksheet): GridRow[] {
	const grid: GridRow[] = [];
	ws.eachRow({ includeEmpty: false }, (row, rowNumber) => {
		const cells: GridRow['cells'] = [];
		const count = row.cellCount;
		for (let c = 1; c <= count; c++) {
			const raw = toRaw(row.getCell(c).value);
			cells.push({ value: raw.value, column: columnLetter(c - 1), fromFormula: raw.fromFormula });
		}
		grid.push({ row: rowNumber, cells });
	});
	return grid;
}

function findSheet(wb: ExcelJS.Workbook, name: string): ExcelJS.Worksheet | undefined {
	const want = name.toLowerCase();
	return wb.worksheets.find((ws) => ws.name.trim().toLowerCase() === want);
}

function isExample(ws: ExcelJS.Worksheet): boolean {
	return ws.name.toLowerCase().startsWith(EXAMPLE_PREFIX.toLowerCase());
}

export async function readXlsx(bytes: Uint8Array, fileName: string, issues: IssueList): Promise<SourceBook> {
	checkSize(bytes, fileName);
	checkXlsxContainer(bytes, fileName);
	const wb = new ExcelJS.Workbook();
	try {
		await wb.xlsx.load(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.length) as unknown as ExcelJS.Buffer);
	} catch (e) {
		throw new FileRefused({ sheet: fileName, row: null, column: null, message: `The workbook could not be read (${(e as Error).message.slice(0, 120)}). Open it in a spreadsheet program, save it again as .xlsx, and upload that.` });
	}

	let stepsSheet = findSheet(wb, SHEETS.steps);
	if (!stepsSheet) {
		stepsSheet = wb.worksheets.find((ws) => {
			if (isExample(ws)) return false;
			const grid = gridOf(ws);
			return findHeaderRow(grid, STEP_COLUMNS) >= 0 || findHeaderRow(grid, DIRECTION_COLUMNS) >= 0;
		});
	}
	if (!stepsSheet) {
		throw new FileRefused({ sheet: fileName, row: null, column: null, message: `No sheet named "${SHEETS.steps}" and no sheet with "from state" and "to state" columns was found. Start from the Escapement template, or name the sheet with your steps "${SHEETS.steps}".` });
	}
	const stepsGrid = gridOf(stepsSheet);
	const specs = stepSpecsFor(stepsGrid);
	const steps = buildTable(stepsSheet.name, stepsGrid, specs, issues);
	if (!steps) {
		throw new FileRefused({ sheet: stepsSheet.name, row: 1, column: null, message: `The sheet "${stepsSheet.name}" has no header row with "from state", "to state" and rate columns in its first 20 rows. Copy the header row from the template.` });
	}
	if (steps.rows.length === 0) {
		const example = wb.worksheets.find((ws) => isExample(ws) && ws.name.toLowerCase().includes('steps'));
		issues.error(
			{ sheet: stepsSheet.name, row: (steps.headerRow ?? 0) + 1, column: null },
			`The sheet "${stepsSheet.name}" has no steps. Enter one step per row below the header${example ? ` (the sheet "${example.name}" shows a filled example)` : ''}.`
		);
	}

	const optional = (name: string, specsFor: ColumnSpec[]): SourceTable | null => {
		const ws = findSheet(wb, name);
		if (!ws) return null;
		const grid = gridOf(ws);
		if (grid.length === 0) return null;
		const table = buildTable(ws.name, grid, specsFor, issues);
		if (!table) {
			issues.error({ sheet: ws.name, row: grid[0].row, column: null }, `The sheet "${ws.name}" has no header row we recognise. Its columns should be: ${specsFor.map((s) => s.header).join(', ')}.`);
		}
		return table;
	};

	return {
		fileName,
		conditions: optional(SHEETS.conditions, CONDITION_COLUMNS),
		states: optional(SHEETS.states, STATE_COLUMNS),
		reactions: optional(SHEETS.reactions, REACTION_COLUMNS),
		steps,
		stepsLayout: specs === DIRECTION_COLUMNS ? 'direction' : 'paired'
	};
}
