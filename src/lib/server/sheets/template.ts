/**
 * The rate-table template workbook: Read me, Conditions, States, Steps and Reactions sheets to fill in,
 * and the same four sheets filled with the invented example (example.ts). Headers come from layout.ts,
 * so the import reads exactly what the template asks for. The example's binding rates are written per
 * µM (and say so in the header) to show that unit in use.
 */
import ExcelJS from 'exceljs';
import { formatEquation } from '../../engine/index';
import { EXAMPLE_LAB, EXAMPLE_NOTES, EXAMPLE_SCHEME } from './example';
import { CONDITION_COLUMNS, EXAMPLE_PREFIX, LIMITS, REACTION_COLUMNS, SHEETS, STATE_COLUMNS, STEP_COLUMNS, type ColumnSpec } from './layout';
import type { SchemeJson } from './to-scheme';

const HEADER_FILL: ExcelJS.Fill = { type: 'pattern', pattern: 'solid', fgColor: { argb: 'FFE8EEF2' } };
const EXAMPLE_TAB = 'FF9BB7C4';

function addTable(wb: ExcelJS.Workbook, name: string, specs: ColumnSpec[], rows: (string | number | null)[][], headers?: Record<string, string>, tab?: string): ExcelJS.Worksheet {
	const ws = wb.addWorksheet(name, { views: [{ state: 'frozen', ySplit: 1 }], properties: tab ? { tabColor: { argb: tab } } : undefined });
	ws.columns = specs.map((s) => ({ header: headers?.[s.key] ?? s.header, key: s.key, width: s.width }));
	const header = ws.getRow(1);
	header.font = { bold: true };
	specs.forEach((s, i) => {
		const cell = header.getCell(i + 1);
		cell.fill = HEADER_FILL;
		cell.note = s.note;
	});
	for (const r of rows) ws.addRow(r);
	return ws;
}

function formatCell(v: number): number {
	return Number(v.toPrecision(12));
}

/** Rows of the four data sheets for a scheme; binding rates divided by `perConcentration` (1e6 for µM). */
export function schemeRows(scheme: SchemeJson, perConcentration = 1, notes: Record<string, string> = {}) {
	const conditions: (string | number | null)[][] = [];
	if (scheme.name) conditions.push(['scheme name', scheme.name, null, null]);
	conditions.push(['temperature', formatCell(scheme.temperatureK - 273.15), '°C', null]);
	conditions.push(['opposing load', scheme.forcePN ?? 0, 'pN', 'positive: against forward motion']);
	if (scheme.stepSizeNm) conditions.push(['step size', scheme.stepSizeNm, 'nm', null]);
	for (const [species, c] of Object.entries(scheme.concentrationsM)) {
		const [v, unit] = c >= 1e-3 ? [c * 1e3, 'mM'] : [c * 1e6, 'µM'];
		conditions.push([`[${species}]`, formatCell(v), unit, null]);
	}
	const states = scheme.states.map((s) => [s.id, s.label ?? null]);
	const steps = scheme.steps.map((s) => [
		s.id,
		s.from,
		s.to,
		formatCell(s.kForward / perConcentration ** (s.binds?.length ?? 0)),
		formatCell(s.kBackward / perConcentration ** (s.releases?.length ?? 0)),
		s.binds?.join(', ') || null,
		s.releases?.join(', ') || null,
		s.displacementNm ?? null,
		s.loadFraction ?? null,
		s.relUncertaintyForward ?? null,
		s.relUncertaintyBackward ?? null,
		notes[s.id] ?? null
	]);
	const reactions = scheme.reactions.map((r) => [r.id, formatEquation(r.stoichiometry), r.deltaG0kJPerMol, null]);
	return { conditions, states, steps, reactions };
}

const README: [string, string][] = [
	['Escapement rate table', ''],
	['What this is', 'A workbook for one kinetic scheme: its states, its reversible steps with their rate constants, the conditions, and the reference reactions the cycles are checked against. Upload it to Escapement or run the audit command on it.'],
	['How to fill it', 'Fill the sheets Conditions, States, Steps and Reactions. The sheets whose names start with "Example" show a filled-in scheme (an invented motor) and are never imported. Keep the header rows; the order of columns does not matter, and extra columns are ignored with a warning.'],
	[SHEETS.conditions, 'One condition per row: temperature (K or °C), opposing load (pN, positive against forward motion), step size (nm or Å, for the randomness), scheme name, and one row per species in solution written in square brackets, e.g. [ATP], with its unit (M, mM, µM or nM). Rows left without a value keep the default (25 °C, no load).'],
	[SHEETS.states, 'One state per row: a short unique name (used on the Steps sheet) and, if you like, a label in words. If this sheet is empty, the states are taken from the Steps sheet in order of appearance.'],
	[SHEETS.steps, 'One reversible step per row: from state, to state, k forward and k backward. Rates are per second, and per M of each species bound in that direction: "binds" lists the species taken from solution going forward, "releases" those returned to solution going forward (k backward is per M of each released species). To give binding rates per µM, write 1/(µM·s) in the rate headers, e.g. "k forward (1/s or 1/(µM·s))". Type 0 for a direction that never happens. Displacement: nm moved along the track going forward (write Å in the header for ångström). Load fraction: the share of the load work on k forward (0 to 1, default 0.5). Rel. uncertainty: relative standard uncertainty of a rate (0.1 or 10%).'],
	['One row per direction', 'Tables with one row per transition are read too: columns step (optional), from state, to state, rate (1/s or 1/(M·s)), binds, releases, displacement (nm), load fraction, rel. uncertainty. The rows A → B and B → A are paired into one reversible step; a transition without its reverse row gets a zero reverse rate, with a warning. When two steps join the same two states, give both rows of each step the same name in the step column.'],
	[SHEETS.reactions, "Reference reactions whose free energy drives the cycles: a name, the equation with → and + (e.g. ATP → ADP + Pi; leave out water and protons), and ΔG°' in kJ/mol (write kcal/mol or kBT in the header for those units). Every species in an equation needs a concentration on the Conditions sheet."],
	['Numbers', 'Type plain numbers (2.5e6, 0.35). Numbers stored as text, with a decimal comma (0,35) or with spaces between digit groups are read and listed as warnings so you can check them; ambiguous ones (1,500) are errors. Formulas are fine when the file was saved by a spreadsheet program (their saved results are read).'],
	['CSV files', 'A CSV holds the Steps table (either layout) with its header row. Conditions, states and reactions can go in lines before the header: "# temperature: 25 °C", "# opposing load: 2 pN", "# step size: 8 nm", "# [ATP]: 1 mM", "# state: T1 | front head ATP", "# reaction: ATP hydrolysis | ATP → ADP + Pi | -30.5 kJ/mol", "# scheme name: …". Fields may be separated by commas, semicolons or tabs; save as UTF-8.'],
	['What the import checks', 'Every problem is listed at once with its sheet, row and column, and nothing is saved until all errors are fixed. Unknown states, duplicate names, negative rates, species without a concentration and schemes in pieces are errors; a step with a zero rate is legal and is pointed out by the audit.'],
	['Limits', `Up to ${LIMITS.steps.toLocaleString('en')} steps and ${LIMITS.fileBytes / 1024 / 1024} MB per file. Old .xls files, password-protected workbooks and files that are not what their name says are refused; save as .xlsx or CSV UTF-8.`],
	['What an audit is not', 'An audit checks the scheme as entered (its rates, conditions and reactions), not the biology behind it.'],
	['Example', `The example sheets describe "Orrin-1", a two-headed stepping motor invented for this template (the ${EXAMPLE_LAB} is invented too). Its binding rates are written per µM, as the headers say.`]
];

export async function templateWorkbook(): Promise<ExcelJS.Workbook> {
	const wb = new ExcelJS.Workbook();
	wb.creator = 'Escapement';
	wb.created = new Date(0);
	const readMe = wb.addWorksheet(SHEETS.readMe);
	readMe.columns = [{ width: 24 }, { width: 110 }];
	README.forEach(([a, b], i) => {
		const row = readMe.addRow([a, b]);
		row.alignment = { wrapText: true, vertical: 'top' };
		row.getCell(1).font = { bold: true, size: i === 0 ? 14 : 11 };
	});

	addTable(wb, SHEETS.conditions, CONDITION_COLUMNS, [
		['temperature', 25, '°C', null],
		['opposing load', 0, 'pN', 'positive: against forward motion'],
		['step size', null, 'nm', null],
		['[ATP]', null, 'mM', null],
		['[ADP]', null, 'µM', null],
		['[Pi]', null, 'mM', null]
	]);
	addTable(wb, SHEETS.states, STATE_COLUMNS, []);
	addTable(wb, SHEETS.steps, STEP_COLUMNS, []);
	addTable(wb, SHEETS.reactions, REACTION_COLUMNS, []);

	const perMicromolar = { kForward: 'k forward (1/s or 1/(µM·s))', kBackward: 'k backward (1/s or 1/(µM·s))' };
	const ex = schemeRows(EXAMPLE_SCHEME, 1e6, EXAMPLE_NOTES);
	addTable(wb, EXAMPLE_PREFIX + 'conditions', CONDITION_COLUMNS, ex.conditions, undefined, EXAMPLE_TAB);
	addTable(wb, EXAMPLE_PREFIX + 'states', STATE_COLUMNS, ex.states, undefined, EXAMPLE_TAB);
	addTable(wb, EXAMPLE_PREFIX + 'steps', STEP_COLUMNS, ex.steps, perMicromolar, EXAMPLE_TAB);
	addTable(wb, EXAMPLE_PREFIX + 'reactions', REACTION_COLUMNS, ex.reactions, undefined, EXAMPLE_TAB);
	return wb;
}

/** The template as .xlsx bytes. */
export async function writeTemplate(): Promise<Uint8Array> {
	const wb = await templateWorkbook();
	return new Uint8Array(await wb.xlsx.writeBuffer());
}
