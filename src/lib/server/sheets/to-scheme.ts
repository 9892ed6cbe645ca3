/**
 * From the tables read out of a workbook or CSV to the plain escapement.scheme/1 JSON object, with a map
 * from every JSON path to the cell it came from, so that the engine's validation errors
 * ("steps[3].kForward: …") can be reported at their sheet, row and column.
 *
 * Units are converted here (units.ts): rates to per M per second for each species bound in that
 * direction, temperature to K, free energies to kJ/mol at the scheme's temperature, lengths to nm.
 * A cell that cannot be read is reported once; the JSON then holds a harmless placeholder and the
 * engine's complaint about the same cell is dropped, so every problem is reported exactly once.
 */
import { readNumber, readText } from './cells';
import { LIMITS, SHEETS } from './layout';
import { pairDirections, type DirectionRow } from './pairing';
import { concentrationFactor, forceFactor, lengthFactor, secondOrderFactor, toKJPerMol, toKelvin } from './units';
import { FileRefused, IssueList, type CellRef, type SourceBook, type SourceTable, type TableRow } from './types';

export const SCHEME_FORMAT_NAME = 'escapement.scheme/1';
export const DEFAULT_TEMPERATURE_K = 298.15;

export interface SchemeJson {
	format: string;
	name?: string;
	temperatureK: number;
	forcePN?: number;
	stepSizeNm?: number;
	concentrationsM: Record<string, number>;
	reactions: { id: string; stoichiometry: Record<string, number>; deltaG0kJPerMol: number }[];
	states: { id: string; label?: string }[];
	steps: StepJson[];
}

export interface StepJson {
	id: string;
	from: string;
	to: string;
	kForward: number;
	kBackward: number;
	binds?: string[];
	releases?: string[];
	displacementNm?: number;
	loadFraction?: number;
	relUncertaintyForward?: number;
	relUncertaintyBackward?: number;
}

export interface SchemeDraft {
	json: SchemeJson;
	/** JSON path (e.g. "steps[3].kForward") → the cell it came from. */
	cellOf: Map<string, CellRef>;
	/** Cells already reported as errors ("sheet!A1"). */
	flagged: Set<string>;
}

/** value·factor, dividing by the exact power of ten when the factor is its inverse (20 µM → 2e-5 exactly). */
export function scaled(value: number, factor: number): number {
	if (factor < 1) {
		const inverse = Math.round(1 / factor);
		if (Math.abs(inverse * factor - 1) < 1e-12) return value / inverse;
	}
	return value * factor;
}

export const cellKey = (at: CellRef) => `${at.sheet}!${at.column ?? ''}${at.row ?? ''}`;

/** Split "ATP, Pi" / "ADP + Pi" / "ATP; ADP" into species names. */
export function speciesList(text: string | null | undefined): string[] {
	if (!text) return [];
	return text
		.split(/[,;]|\s+\+\s+|\s+/)
		.map((s) => s.trim())
		.filter((s) => s !== '' && s !== '+' && s.toLowerCase() !== 'and' && s !== '-' && s !== '—');
}

/** "ATP → ADP + Pi" → { ATP: -1, ADP: 1, Pi: 1 }, or an error message. */
export function parseEquation(text: string): { ok: true; stoichiometry: Record<string, number> } | { ok: false; message: string } {
	const sides = text.split(/\s*(?:<=>|<->|⇌|⇄|↔|→|->|=)\s*/);
	if (sides.length !== 2 || sides[0].trim() === '' || sides[1].trim() === '') {
		return { ok: false, message: `"${text}" is not an equation we read. Write it as reactants → products, e.g. ATP → ADP + Pi.` };
	}
	const stoichiometry: Record<string, number> = {};
	for (const [side, sign] of [[sides[0], -1], [sides[1], 1]] as const) {
		for (const term of side.split(/\s+\+\s+|(?<=[A-Za-z0-9)\]])\+(?=[A-Za-z([])/)) {
			const t = term.trim();
			if (t === '') return { ok: false, message: `"${text}" has an empty term. Write it as reactants → products, e.g. ATP → ADP + Pi.` };
			const m = /^(\d+(?:\.\d+)?)\s+(\S+)$/.exec(t);
			const [coefficient, species] = m ? [Number(m[1]), m[2]] : [1, t];
			if (/\s/.test(species)) return { ok: false, message: `"${t}" in "${text}" is not one species. Separate species with " + " and put a coefficient before a species with a space (2 ATP).` };
			stoichiometry[species] = (stoichiometry[species] ?? 0) + sign * coefficient;
		}
	}
	for (const [k, v] of Object.entries(stoichiometry)) if (v === 0) delete stoichiometry[k];
	return { ok: true, stoichiometry };
}

interface Ctx {
	issues: IssueList;
	cellOf: Map<string, CellRef>;
	flagged: Set<string>;
}

function at(table: SourceTable, row: TableRow, key: string): CellRef {
	const cell = row.cells[key];
	const col = table.columns.find((c) => c.key === key);
	return { sheet: table.sheet, row: row.row, column: cell?.column ?? col?.column ?? null };
}

/** Reads one cell with `read`; a cell that got an error is flagged, so parseScheme's error for it is not reported again. */
function readFlagged<T>(
	read: (cell: TableRow['cells'][string] | undefined, at: CellRef, issues: IssueList, what: string) => T,
	ctx: Ctx,
	table: SourceTable,
	row: TableRow,
	key: string,
	what: string
): T {
	const where = at(table, row, key);
	const before = ctx.issues.errors.length;
	const v = read(row.cells[key], where, ctx.issues, what);
	if (ctx.issues.errors.length > before) ctx.flagged.add(cellKey(where));
	return v;
}

function num(ctx: Ctx, table: SourceTable, row: TableRow, key: string, what: string): number | null | undefined {
	return readFlagged(readNumber, ctx, table, row, key, what);
}

function txt(ctx: Ctx, table: SourceTable, row: TableRow, key: string, what: string): string | null | undefined {
	return readFlagged(readText, ctx, table, row, key, what);
}

function fail(ctx: Ctx, where: CellRef, message: string): void {
	ctx.issues.error(where, message);
	ctx.flagged.add(cellKey(where));
}

function unitOf(table: SourceTable, key: string): string | null {
	return table.columns.find((c) => c.key === key)?.unit ?? null;
}

function headerCell(table: SourceTable, key: string): CellRef {
	const col = table.columns.find((c) => c.key === key);
	return { sheet: table.sheet, row: table.headerRow, column: col?.column ?? null };
}

function requireColumns(ctx: Ctx, table: SourceTable, keys: [string, string][]): boolean {
	let ok = true;
	for (const [key, header] of keys) {
		if (!table.columns.some((c) => c.key === key)) {
			fail(ctx, { sheet: table.sheet, row: table.headerRow, column: null }, `The ${table.sheet === SHEETS.steps ? 'Steps sheet' : `table on "${table.sheet}"`} has no "${header}" column. Add it to the header row (see the Read me sheet of the template).`);
			ok = false;
		}
	}
	return ok;
}

function readConditions(ctx: Ctx, book: SourceBook, json: SchemeJson): void {
	const table = book.conditions;
	let temperatureRow: { row: TableRow; value: number } | null = null;
	const seen = new Map<string, number>();
	if (table) {
		for (const row of table.rows) {
			const name = txt(ctx, table, row, 'name', 'Condition');
			if (name == null) {
				if (name === null) fail(ctx, at(table, row, 'name'), 'This row has a value but no condition name. Write temperature, opposing load, step size, scheme name, or [species].');
				continue;
			}
			const unit = txt(ctx, table, row, 'unit', 'Unit') ?? null;
			const lower = name.toLowerCase().replace(/\s+/g, ' ');
			const species = /^\[(.+)\]$/.exec(name)?.[1]?.trim() ?? /^(?:concentration|conc\.?|c)\s*(?:of\s+)?\(?\s*([^)\s]+)\s*\)?$/i.exec(name)?.[1];
			const canonical = species ? `[${species}]` : lower;
			const where = at(table, row, 'value');
			const valueCell = row.cells.value?.value;
			if (!valueCell || valueCell.kind === 'empty' || (valueCell.kind === 'text' && valueCell.text.trim() === '')) continue; // left empty: the default holds
			if (seen.has(canonical)) {
				fail(ctx, at(table, row, 'name'), `"${name}" is given twice (also in row ${seen.get(canonical)}). Keep one of the two rows.`);
				continue;
			}
			seen.set(canonical, row.row);
			if (lower === 'scheme name' || lower === 'name' || lower === 'scheme') {
				const v = txt(ctx, table, row, 'value', 'Scheme name');
				if (v) {
					json.name = v;
					ctx.cellOf.set('name', where);
				}
				continue;
			}
			const value = num(ctx, table, row, 'value', name);
			if (value === undefined) continue;
			if (value === null) continue;
			const unitAt = at(table, row, 'unit');
			if (lower === 'temperature' || lower === 't') {
				const k = toKelvin(value, unit);
				if (!k.ok) fail(ctx, unit ? unitAt : where, k.message);
				else {
					json.temperatureK = k.value;
					temperatureRow = { row, value: k.value };
					ctx.cellOf.set('temperatureK', where);
				}
			} else if (['opposing load', 'load', 'force', 'load force', 'external load'].includes(lower)) {
				const f = forceFactor(unit);
				if (!f.ok) fail(ctx, unitAt, f.message);
				else {
					json.forcePN = scaled(value, f.value);
					ctx.cellOf.set('forcePN', where);
				}
			} else if (['step size', 'step length', 'period'].includes(lower)) {
				const f = lengthFactor(unit);
				if (!f.ok) fail(ctx, unitAt, f.message);
				else {
					json.stepSizeNm = scaled(value, f.value);
					ctx.cellOf.set('stepSizeNm', where);
				}
			} else if (species) {
				const f = concentrationFactor(unit);
				if (!f.ok) fail(ctx, unitAt, f.message);
				else if (value < 0) fail(ctx, where, `The concentration of ${species} is negative. Type a concentration of 0 or more.`);
				else {
					if (unit === null) ctx.issues.warn(where, `No unit for [${species}]; M (mol/L) is assumed. Write M, mM, µM or nM in the unit column.`);
					json.concentrationsM[species] = scaled(value, f.value);
					ctx.cellOf.set(`concentrationsM.${species}`, where);
				}
			} else {
				fail(ctx, at(table, row, 'name'), `"${name}" is not a condition we know. Use temperature, opposing load, step size, scheme name, or [species] (e.g. [ATP]) for a concentration.`);
			}
		}
	}
	if (!temperatureRow) {
		ctx.issues.warn(
			{ sheet: table?.sheet ?? book.fileName, row: null, column: null },
			`No temperature was given; ${DEFAULT_TEMPERATURE_K} K (25 °C) is assumed. Add a temperature row to the conditions if the rates were measured at another temperature.`
		);
	}
}

function readReactions(ctx: Ctx, book: SourceBook, json: SchemeJson): void {
	const table = book.reactions;
	if (!table || table.rows.length === 0) return;
	if (!requireColumns(ctx, table, [['id', 'reaction'], ['equation', 'equation'], ['deltaG', "ΔG°'"]])) return;
	const headerUnit = unitOf(table, 'deltaG');
	table.rows.forEach((row) => {
		const i = json.reactions.length;
		const id = txt(ctx, table, row, 'id', 'Reaction name');
		const equation = txt(ctx, table, row, 'equation', 'Equation');
		const dG = num(ctx, table, row, 'deltaG', "ΔG°'");
		const rowUnit = txt(ctx, table, row, 'unit', 'Unit');
		if (id === null) fail(ctx, at(table, row, 'id'), 'This reaction has no name. Give it one, e.g. ATP hydrolysis.');
		if (equation === null) fail(ctx, at(table, row, 'equation'), 'This reaction has no equation. Write e.g. ATP → ADP + Pi.');
		if (dG === null) fail(ctx, at(table, row, 'deltaG'), "This reaction has no ΔG°'. Type its standard free-energy change.");
		let stoichiometry: Record<string, number> = {};
		if (equation) {
			const parsed = parseEquation(equation);
			if (!parsed.ok) fail(ctx, at(table, row, 'equation'), parsed.message);
			else stoichiometry = parsed.stoichiometry;
		}
		let deltaG = 0;
		if (typeof dG === 'number') {
			const unit = rowUnit || headerUnit;
			const conv = toKJPerMol(dG, unit, json.temperatureK);
			if (!conv.ok) fail(ctx, rowUnit ? at(table, row, 'unit') : headerCell(table, 'deltaG'), conv.message);
			else deltaG = conv.value;
		}
		json.reactions.push({ id: id || `reaction ${i + 1}`, stoichiometry, deltaG0kJPerMol: deltaG });
		ctx.cellOf.set(`reactions[${i}]`, { sheet: table.sheet, row: row.row, column: null });
		ctx.cellOf.set(`reactions[${i}].id`, at(table, row, 'id'));
		ctx.cellOf.set(`reactions[${i}].stoichiometry`, at(table, row, 'equation'));
		for (const s of Object.keys(stoichiometry)) ctx.cellOf.set(`reactions[${i}].stoichiometry.${s}`, at(table, row, 'equation'));
		ctx.cellOf.set(`reactions[${i}].deltaG0kJPerMol`, at(table, row, 'deltaG'));
	});
}

function readStates(ctx: Ctx, book: SourceBook, json: SchemeJson): void {
	const table = book.states;
	if (!table || table.rows.length === 0) return;
	if (!requireColumns(ctx, table, [['id', 'state']])) return;
	for (const row of table.rows) {
		const id = txt(ctx, table, row, 'id', 'State');
		const label = txt(ctx, table, row, 'label', 'Label');
		if (id === null) {
			fail(ctx, at(table, row, 'id'), 'This row has a label but no state name. Give the state a short name, or delete the row.');
			continue;
		}
		if (id === undefined) continue;
		const i = json.states.length;
		json.states.push(label ? { id, label } : { id });
		ctx.cellOf.set(`states[${i}]`, at(table, row, 'id'));
		ctx.cellOf.set(`states[${i}].id`, at(table, row, 'id'));
		if (label) ctx.cellOf.set(`states[${i}].label`, at(table, row, 'label'));
	}
}

interface StepCells {
	row: CellRef;
	id: CellRef | null;
	from: CellRef;
	to: CellRef;
	kForward: CellRef;
	kBackward: CellRef;
	binds: CellRef;
	releases: CellRef;
	displacementNm: CellRef;
	loadFraction: CellRef;
	relUncertaintyForward: CellRef;
	relUncertaintyBackward: CellRef;
}

function registerStep(ctx: Ctx, i: number, step: StepJson, cells: StepCells): void {
	ctx.cellOf.set(`steps[${i}]`, cells.row);
	for (const key of ['id', 'from', 'to', 'kForward', 'kBackward', 'binds', 'releases', 'displacementNm', 'loadFraction', 'relUncertaintyForward', 'relUncertaintyBackward'] as const) {
		const c = cells[key];
		if (c) ctx.cellOf.set(`steps[${i}].${key}`, c);
	}
	step.binds?.forEach((_, j) => ctx.cellOf.set(`steps[${i}].binds[${j}]`, cells.binds));
	step.releases?.forEach((_, j) => ctx.cellOf.set(`steps[${i}].releases[${j}]`, cells.releases));
}

function checkUncertainty(ctx: Ctx, where: CellRef, v: number | null | undefined): number | undefined {
	if (typeof v !== 'number') return undefined;
	if (v < 0) {
		fail(ctx, where, 'A relative uncertainty cannot be negative. Type e.g. 0.1 for ±10 %.');
		return undefined;
	}
	if (v >= 1) ctx.issues.warn(where, `A relative uncertainty of ${v} means ±${Math.round(v * 100)} %. If you meant ${v} %, write ${v / 100} or ${v}%.`);
	return v;
}

function readPairedSteps(ctx: Ctx, table: SourceTable, json: SchemeJson): void {
	if (!requireColumns(ctx, table, [['from', 'from state'], ['to', 'to state'], ['kForward', 'k forward (1/s or 1/(M·s))'], ['kBackward', 'k backward (1/s or 1/(M·s))']])) return;
	const factors = rateFactors(ctx, table, ['kForward', 'kBackward']);
	const lengthF = lengthFactorOf(ctx, table);
	for (const row of table.rows) {
		const i = json.steps.length;
		const id = txt(ctx, table, row, 'id', 'Step');
		const from = txt(ctx, table, row, 'from', 'From state');
		const to = txt(ctx, table, row, 'to', 'To state');
		const kf = num(ctx, table, row, 'kForward', 'k forward');
		const kb = num(ctx, table, row, 'kBackward', 'k backward');
		const binds = speciesList(txt(ctx, table, row, 'binds', 'Binds'));
		const releases = speciesList(txt(ctx, table, row, 'releases', 'Releases'));
		const d = num(ctx, table, row, 'displacementNm', 'Displacement');
		const theta = num(ctx, table, row, 'loadFraction', 'Load fraction');
		const uf = checkUncertainty(ctx, at(table, row, 'relUncertaintyForward'), num(ctx, table, row, 'relUncertaintyForward', 'Uncertainty forward'));
		const ub = checkUncertainty(ctx, at(table, row, 'relUncertaintyBackward'), num(ctx, table, row, 'relUncertaintyBackward', 'Uncertainty backward'));
		if (from === null) fail(ctx, at(table, row, 'from'), 'The from state is empty. Type the state the step leaves.');
		if (to === null) fail(ctx, at(table, row, 'to'), 'The to state is empty. Type the state the step reaches.');
		if (kf === null) fail(ctx, at(table, row, 'kForward'), 'k forward is empty. Type the rate constant (0 if the step cannot go forward).');
		if (kb === null) fail(ctx, at(table, row, 'kBackward'), 'k backward is empty. Type the rate constant (0 if the step cannot go back).');
		const step: StepJson = {
			id: id || `s${i + 1}`,
			from: from || `?${i}`,
			to: to || `?${i}'`,
			kForward: typeof kf === 'number' ? kf * factors.kForward ** binds.length : 1,
			kBackward: typeof kb === 'number' ? kb * factors.kBackward ** releases.length : 1
		};
		if (binds.length) step.binds = binds;
		if (releases.length) step.releases = releases;
		if (typeof d === 'number') step.displacementNm = scaled(d, lengthF);
		if (typeof theta === 'number') step.loadFraction = theta;
		if (uf !== undefined) step.relUncertaintyForward = uf;
		if (ub !== undefined) step.relUncertaintyBackward = ub;
		json.steps.push(step);
		registerStep(ctx, i, step, {
			row: { sheet: table.sheet, row: row.row, column: null },
			id: at(table, row, 'id'),
			from: at(table, row, 'from'),
			to: at(table, row, 'to'),
			kForward: at(table, row, 'kForward'),
			kBackward: at(table, row, 'kBackward'),
			binds: at(table, row, 'binds'),
			releases: at(table, row, 'releases'),
			displacementNm: at(table, row, 'displacementNm'),
			loadFraction: at(table, row, 'loadFraction'),
			relUncertaintyForward: at(table, row, 'relUncertaintyForward'),
			relUncertaintyBackward: at(table, row, 'relUncertaintyBackward')
		});
	}
}

function rateFactors(ctx: Ctx, table: SourceTable, keys: string[]): Record<string, number> {
	const out: Record<string, number> = {};
	for (const key of keys) {
		const f = secondOrderFactor(unitOf(table, key));
		if (!f.ok) {
			fail(ctx, headerCell(table, key), f.message);
			out[key] = 1;
		} else out[key] = f.value;
	}
	return out;
}

function lengthFactorOf(ctx: Ctx, table: SourceTable): number {
	const f = lengthFactor(unitOf(table, 'displacementNm'));
	if (!f.ok) {
		fail(ctx, headerCell(table, 'displacementNm'), f.message);
		return 1;
	}
	return f.value;
}

interface ReadDirection extends DirectionRow {
	rate: number | null | undefined;
	binds: string[];
	releases: string[];
	d: number | null | undefined;
	theta: number | null | undefined;
	u: number | undefined;
	source: TableRow;
}

function sameSpecies(a: string[], b: string[]): boolean {
	return a.length === b.length && [...a].sort().join('\u0000') === [...b].sort().join('\u0000');
}

function readDirectionSteps(ctx: Ctx, table: SourceTable, json: SchemeJson): void {
	if (!requireColumns(ctx, table, [['from', 'from state'], ['to', 'to state'], ['rate', 'rate (1/s or 1/(M·s))']])) return;
	const factor = rateFactors(ctx, table, ['rate']).rate;
	const lengthF = lengthFactorOf(ctx, table);
	const rows: ReadDirection[] = [];
	for (const row of table.rows) {
		const from = txt(ctx, table, row, 'from', 'From state');
		const to = txt(ctx, table, row, 'to', 'To state');
		const rate = num(ctx, table, row, 'rate', 'Rate');
		if (from === null) fail(ctx, at(table, row, 'from'), 'The from state is empty. Type the state before the transition.');
		if (to === null) fail(ctx, at(table, row, 'to'), 'The to state is empty. Type the state after the transition.');
		if (rate === null) fail(ctx, at(table, row, 'rate'), 'The rate is empty. Type the rate constant, or delete the row if the transition does not happen.');
		if (!from || !to) continue;
		rows.push({
			row: row.row,
			id: txt(ctx, table, row, 'id', 'Step') ?? null,
			from,
			to,
			at: at(table, row, 'from'),
			rate,
			binds: speciesList(txt(ctx, table, row, 'binds', 'Binds')),
			releases: speciesList(txt(ctx, table, row, 'releases', 'Releases')),
			d: num(ctx, table, row, 'displacementNm', 'Displacement'),
			theta: num(ctx, table, row, 'loadFraction', 'Load fraction'),
			u: checkUncertainty(ctx, at(table, row, 'relUncertainty'), num(ctx, table, row, 'relUncertainty', 'Uncertainty')),
			source: row
		});
	}
	const pairs = pairDirections(rows, ctx.issues);
	pairs.forEach(({ forward: f, backward: b }) => {
		const i = json.steps.length;
		let binds = f.binds;
		let releases = f.releases;
		if (b) {
			if (binds.length === 0) binds = b.releases;
			else if (b.releases.length && !sameSpecies(b.releases, binds)) {
				fail(ctx, at(table, b.source, 'releases'), `Row ${b.row} releases ${b.releases.join(', ')} but row ${f.row}, its reverse, binds ${binds.join(', ')}. The reverse of a step releases what the step binds; correct one of the two rows.`);
			}
			if (releases.length === 0) releases = b.binds;
			else if (b.binds.length && !sameSpecies(b.binds, releases)) {
				fail(ctx, at(table, b.source, 'binds'), `Row ${b.row} binds ${b.binds.join(', ')} but row ${f.row}, its reverse, releases ${releases.join(', ')}. The reverse of a step binds what the step releases; correct one of the two rows.`);
			}
		}
		let d = typeof f.d === 'number' ? f.d : undefined;
		if (b && typeof b.d === 'number') {
			if (d === undefined) d = -b.d;
			else if (Math.abs(d + b.d) > 1e-9 * Math.max(1, Math.abs(d))) {
				fail(ctx, at(table, b.source, 'displacementNm'), `The displacement of row ${b.row} (${b.d}) should be the negative of row ${f.row}'s (${d}), since it is the same step run backwards. Correct it, or leave it empty.`);
			}
		}
		let theta = typeof f.theta === 'number' ? f.theta : undefined;
		if (b && typeof b.theta === 'number') {
			if (theta === undefined) theta = 1 - b.theta;
			else if (Math.abs(theta + b.theta - 1) > 1e-9) {
				fail(ctx, at(table, b.source, 'loadFraction'), `The load fractions of rows ${f.row} and ${b.row} add up to ${theta + b.theta}; the two directions of a step share the load work, so they must add up to 1. Correct one, or leave the reverse empty.`);
			}
		}
		const step: StepJson = {
			id: f.id || b?.id || `s${i + 1}`,
			from: f.from,
			to: f.to,
			kForward: typeof f.rate === 'number' ? f.rate * factor ** binds.length : 1,
			kBackward: b ? (typeof b.rate === 'number' ? b.rate * factor ** releases.length : 1) : 0
		};
		if (binds.length) step.binds = binds;
		if (releases.length) step.releases = releases;
		if (d !== undefined) step.displacementNm = scaled(d, lengthF);
		if (theta !== undefined) step.loadFraction = theta;
		if (f.u !== undefined) step.relUncertaintyForward = f.u;
		if (b && b.u !== undefined) step.relUncertaintyBackward = b.u;
		json.steps.push(step);
		const other = b ?? f;
		registerStep(ctx, i, step, {
			row: { sheet: table.sheet, row: f.row, column: null },
			id: at(table, f.source, 'id'),
			from: at(table, f.source, 'from'),
			to: at(table, f.source, 'to'),
			kForward: at(table, f.source, 'rate'),
			kBackward: at(table, other.source, 'rate'),
			binds: f.binds.length || !b ? at(table, f.source, 'binds') : at(table, b.source, 'releases'),
			releases: f.releases.length || !b ? at(table, f.source, 'releases') : at(table, b.source, 'binds'),
			displacementNm: at(table, typeof f.d === 'number' || !b ? f.source : b.source, 'displacementNm'),
			loadFraction: at(table, typeof f.theta === 'number' || !b ? f.source : b.source, 'loadFraction'),
			relUncertaintyForward: at(table, f.source, 'relUncertainty'),
			relUncertaintyBackward: at(table, other.source, 'relUncertainty')
		});
	});
}

/** States named in the steps, in order of first appearance (when no States table is given). */
function inferStates(ctx: Ctx, json: SchemeJson): void {
	const seen = new Set<string>();
	json.steps.forEach((s, i) => {
		for (const key of ['from', 'to'] as const) {
			const id = s[key];
			if (seen.has(id) || id.startsWith('?')) continue;
			seen.add(id);
			ctx.cellOf.set(`states[${json.states.length}]`, ctx.cellOf.get(`steps[${i}].${key}`)!);
			ctx.cellOf.set(`states[${json.states.length}].id`, ctx.cellOf.get(`steps[${i}].${key}`)!);
			json.states.push({ id });
		}
	});
}

export function toSchemeJson(book: SourceBook, issues: IssueList): SchemeDraft {
	const ctx: Ctx = { issues, cellOf: new Map(), flagged: new Set() };
	const json: SchemeJson = {
		format: SCHEME_FORMAT_NAME,
		temperatureK: DEFAULT_TEMPERATURE_K,
		concentrationsM: {},
		reactions: [],
		states: [],
		steps: []
	};
	const stepRows = book.steps.rows.length;
	const maxRows = book.stepsLayout === 'direction' ? 2 * LIMITS.steps : LIMITS.steps;
	if (stepRows > maxRows) {
		throw new FileRefused({ sheet: book.steps.sheet, row: null, column: null, message: `The table has ${stepRows} ${book.stepsLayout === 'direction' ? 'transition rows' : 'steps'}; the limit is ${LIMITS.steps} steps. Split the scheme, or remove rows that are not steps.` });
	}
	readConditions(ctx, book, json);
	readReactions(ctx, book, json);
	readStates(ctx, book, json);
	if (book.stepsLayout === 'direction') readDirectionSteps(ctx, book.steps, json);
	else readPairedSteps(ctx, book.steps, json);
	if (json.steps.length > LIMITS.steps) {
		throw new FileRefused({ sheet: book.steps.sheet, row: null, column: null, message: `The table pairs into ${json.steps.length} steps; the limit is ${LIMITS.steps}. Split the scheme.` });
	}
	if (json.states.length === 0) inferStates(ctx, json);
	return { json, cellOf: ctx.cellOf, flagged: ctx.flagged };
}

/** "steps.3.kForward", 'reactions[0].stoichiometry["Ca2+"]' or ["steps", 3, "kForward"] → "steps[3].kForward". */
export function normalizePath(path: unknown): string {
	const parts: (string | number)[] = [];
	if (Array.isArray(path)) parts.push(...path);
	else {
		const re = /\[(\d+)\]|\["((?:[^"\\]|\\.)*)"\]|\.?([^.[\]]+)/g;
		for (const m of String(path ?? '').matchAll(re)) {
			if (m[1] !== undefined) parts.push(Number(m[1]));
			else if (m[2] !== undefined) parts.push(JSON.parse(`"${m[2]}"`) as string);
			else if (m[3] !== undefined) parts.push(/^\d+$/.test(m[3]) ? Number(m[3]) : m[3]);
		}
	}
	let out = '';
	for (const p of parts) {
		if (typeof p === 'number') out += `[${p}]`;
		else if (p !== '$') out += (out === '' ? '' : '.') + p;
	}
	return out;
}

/** The cell of a JSON path, or of its nearest ancestor that has one. */
export function cellForPath(draft: Pick<SchemeDraft, 'cellOf'>, path: unknown): CellRef | null {
	let p = normalizePath(path);
	while (p !== '') {
		const hit = draft.cellOf.get(p);
		if (hit) return hit;
		const cut = Math.max(p.lastIndexOf('.'), p.lastIndexOf('['));
		if (cut <= 0) break;
		p = p.slice(0, cut);
	}
	return null;
}
