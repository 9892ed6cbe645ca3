/**
 * The audit as a workbook: Summary, Cycles, State probabilities, Step fluxes, Observables, Conditions
 * and Provenance sheets. Numbers are written as numbers (full double precision) with number formats;
 * verdicts are words, so the sheet reads the same printed in black and white (the fill colour only
 * repeats what the word says). Missing values (an irreversible cycle's ratio) are empty cells.
 */
import { neutralise } from './export-csv';
import ExcelJS from 'exceljs';
import { formatEquation, type Audit, type Scheme } from '../../engine/index';
import {
	cautionsOf,
	cyclesTable,
	findingsOf,
	observablesTable,
	overallVerdict,
	provenanceRows,
	statesTable,
	stepsTable,
	verdictCounts,
	consistencyDecided,
	type AuditTable,
	type Provenance
} from './audit-tables';

export const EXPORT_SHEETS = {
	summary: 'Summary',
	cycles: 'Cycles',
	states: 'State probabilities',
	steps: 'Step fluxes',
	observables: 'Observables',
	conditions: 'Conditions',
	provenance: 'Provenance'
} as const;

const HEADER_FILL: ExcelJS.Fill = { type: 'pattern', pattern: 'solid', fgColor: { argb: 'FFE8EEF2' } };
const VERDICT_FILL: Record<string, string> = { consistent: 'FFE3F1E6', violation: 'FFF7DEDB', irreversible: 'FFF3EBD6', unbalanced: 'FFEDE4F3' };

/**
 * Text is written as text, never as a formula: a label like `=HYPERLINK(…)` gets the same leading apostrophe as in
 * the CSV export, so re-editing the cell or saving the sheet as CSV cannot bring it to life (OWASP "CSV Injection").
 */
function asCell(v: string | number | null | undefined): string | number | null {
	if (v === null || v === undefined) return null;
	return typeof v === 'string' ? neutralise(v) : v;
}

function writeTable(wb: ExcelJS.Workbook, sheetName: string, table: AuditTable): ExcelJS.Worksheet {
	const ws = wb.addWorksheet(sheetName, { views: [{ state: 'frozen', ySplit: 1 }] });
	ws.columns = table.columns.map((c) => ({ header: c.header, width: c.width }));
	const header = ws.getRow(1);
	header.font = { bold: true };
	header.alignment = { wrapText: true, vertical: 'top' };
	table.columns.forEach((_, i) => (header.getCell(i + 1).fill = HEADER_FILL));
	const verdictCol = table.columns.findIndex((c) => c.header === 'verdict');
	for (const values of table.rows) {
		const row = ws.addRow(values.map(asCell));
		table.columns.forEach((c, i) => {
			if (c.numFmt && typeof values[i] === 'number') row.getCell(i + 1).numFmt = c.numFmt;
		});
		if (verdictCol >= 0) {
			const fill = VERDICT_FILL[String(values[verdictCol])];
			if (fill) row.getCell(verdictCol + 1).fill = { type: 'pattern', pattern: 'solid', fgColor: { argb: fill } };
		}
	}
	if (table.rows.length > 0) ws.autoFilter = { from: { row: 1, column: 1 }, to: { row: 1, column: table.columns.length } };
	return ws;
}

function keyValueSheet(wb: ExcelJS.Workbook, name: string, rows: (string | number | null)[][], widths = [34, 70, 14]): ExcelJS.Worksheet {
	const ws = wb.addWorksheet(name);
	ws.columns = widths.map((width) => ({ width }));
	for (const r of rows) ws.addRow(r.map(asCell));
	return ws;
}

export async function auditWorkbook(audit: Audit, scheme: Scheme | null, provenance: Provenance): Promise<Uint8Array> {
	const wb = new ExcelJS.Workbook();
	wb.creator = 'Escapement';
	wb.created = new Date(provenance.createdAt);
	const v = verdictCounts(audit);

	const summary = keyValueSheet(wb, EXPORT_SHEETS.summary, [
		['Escapement audit', scheme?.name || null],
		['overall', overallVerdict(audit)],
		['states', audit.states.length],
		['steps', audit.steps.length],
		['cycles listed', audit.cycleCount],
		['all cycles listed', audit.cyclesComplete ? 'yes' : 'no'],
		['cycles consistent', v.consistent],
		['cycles in violation', v.violation],
		['cycles irreversible', v.irreversible],
		['cycles unbalanced', v.unbalanced],
		['mean velocity (nm/s)', audit.observables.velocityNmPerS],
		['entropy production (kB/s)', audit.observables.entropyProductionKTPerS],
		[
			'consistency decided for every cycle',
			consistencyDecided(audit) ? 'yes' : `no: ${(audit as Partial<Audit>).consistencyScope?.summary ?? 'not every cycle was listed'}`
		],
		...findingsOf(audit).map((f, i) => [i === 0 ? 'findings' : null, f]),
		...cautionsOf(audit).map((c, i) => [i === 0 ? 'cautions' : null, c])
	]);
	summary.getColumn(1).font = { bold: true };
	summary.getColumn(2).alignment = { wrapText: true, vertical: 'top' };
	summary.getCell('A1').font = { bold: true, size: 14 };
	for (const r of [11, 12]) summary.getCell(`B${r}`).numFmt = '0.0000E+00';

	writeTable(wb, EXPORT_SHEETS.cycles, cyclesTable(audit));
	writeTable(wb, EXPORT_SHEETS.states, statesTable(audit, scheme));
	writeTable(wb, EXPORT_SHEETS.steps, stepsTable(audit, scheme));
	writeTable(wb, EXPORT_SHEETS.observables, observablesTable(audit));

	const c = (audit as Partial<Audit>).conditions;
	const temperatureK = c?.temperatureK ?? scheme?.temperatureK ?? null;
	const conditionRows: (string | number | null)[][] = [
		['condition', 'value', 'unit'],
		['temperature', temperatureK, 'K'],
		['opposing load', c?.forcePN ?? scheme?.forcePN ?? null, 'pN'],
		['thermal energy kBT', c?.kTpNnm ?? null, 'pN·nm'],
		['step size', scheme?.stepSizeNm ?? null, 'nm'],
		...Object.entries(c?.concentrationsM ?? scheme?.concentrationsM ?? {}).map(([s, x]) => [`[${s}]`, x, 'M']),
		...(scheme?.reactions ?? []).map((r) => [`ΔG°' ${r.id} (${formatEquation(r.stoichiometry)})`, r.deltaG0kJPerMol, 'kJ/mol'])
	];
	const cond = keyValueSheet(wb, EXPORT_SHEETS.conditions, conditionRows, [40, 16, 10]);
	cond.getRow(1).font = { bold: true };
	cond.getColumn(2).numFmt = '0.####E+00';

	const prov = keyValueSheet(wb, EXPORT_SHEETS.provenance, provenanceRows(provenance), [24, 72]);
	prov.getColumn(1).font = { bold: true };

	return new Uint8Array(await wb.xlsx.writeBuffer());
}
