import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { auditScheme, parseScheme } from '../../src/lib/engine/index';
import { importRateTable } from '../../src/lib/server/sheets/import';
import { writeTemplate } from '../../src/lib/server/sheets/template';
import { EXAMPLE_SCHEME } from '../../src/lib/server/sheets/example';
import { DIRECTION_HEADER, addRow, bytesOf, csvLine, csvPreamble, directionRows, filledTemplate, loadBook } from '../fixtures/sheets/build';
import { CORPUS, buildCase } from '../fixtures/sheets/corpus';
import { VESSEL3 } from '../fixtures/sheets/schemes';

const text = (s: string) => new TextEncoder().encode(s);

function fromJson(json: unknown) {
	const parsed = parseScheme(json);
	if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
	return parsed.scheme;
}

async function imported(bytes: Uint8Array, name: string) {
	const r = await importRateTable(bytes, name);
	if (!r.ok) throw new Error(JSON.stringify(r.errors, null, 1));
	return r;
}

describe('round trip through the template', () => {
	it('template → filled with exceljs → imported → audited equals the audit of the same scheme from JSON', async () => {
		const r = await imported(await filledTemplate(VESSEL3), 'vessel3.xlsx');
		const reference = fromJson(VESSEL3);
		expect(r.scheme).toEqual(reference);
		expect(auditScheme(r.scheme)).toEqual(auditScheme(reference));
		expect(r.warnings).toEqual([]);
	});

	it('the template as shipped imports to an error that points at the empty Steps sheet', async () => {
		const r = await importRateTable(await writeTemplate(), 'template.xlsx');
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.errors).toHaveLength(1);
		expect(r.errors[0]).toMatchObject({ sheet: 'Steps', row: 2 });
		expect(r.errors[0].message).toMatch(/Example steps/);
	});

	it("the template's example sheets, renamed, import to the example scheme, every cycle consistent", async () => {
		const wb = await loadBook(await writeTemplate());
		for (const name of ['Conditions', 'States', 'Steps', 'Reactions']) {
			wb.removeWorksheet(wb.getWorksheet(name)!.id);
			wb.getWorksheet(`Example ${name.toLowerCase()}`)!.name = name;
		}
		const r = await imported(await bytesOf(wb), 'example.xlsx');
		const reference = fromJson(EXAMPLE_SCHEME);
		for (const [i, step] of r.scheme.steps.entries()) {
			expect(step.kForward).toBeCloseTo(reference.steps[i].kForward, 6);
			expect(step.kBackward / reference.steps[i].kBackward).toBeCloseTo(1, 12);
		}
		const audit = auditScheme(r.scheme);
		expect(audit.cycles.length).toBeGreaterThan(1);
		expect(audit.cycles.every((c) => c.verdict === 'consistent')).toBe(true);
	});

	it('units labs use (per µM, °C, kcal/mol, Å) convert to the same scheme', async () => {
		const r = await imported(await filledTemplate(VESSEL3, { rateUnit: 'µM', celsius: true, kcal: true, angstrom: true }), 'units.xlsx');
		const reference = fromJson(VESSEL3);
		const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);
		expect(rel(r.scheme.temperatureK, reference.temperatureK)).toBeLessThan(1e-14);
		expect(rel(r.scheme.stepSizeNm!, reference.stepSizeNm!)).toBeLessThan(1e-14);
		r.scheme.reactions.forEach((x, i) => expect(rel(x.deltaG0kJPerMol, reference.reactions[i].deltaG0kJPerMol)).toBeLessThan(1e-14));
		r.scheme.steps.forEach((s, i) => {
			const ref = reference.steps[i];
			expect(rel(s.kForward, ref.kForward)).toBeLessThan(1e-14);
			expect(rel(s.kBackward, ref.kBackward)).toBeLessThan(1e-14);
			expect(Math.abs(s.displacementNm - ref.displacementNm)).toBeLessThan(1e-14);
		});
		const a = auditScheme(r.scheme);
		const b = auditScheme(reference);
		a.cycles.forEach((c, i) => expect(Math.abs(c.deviationLog10! - b.cycles[i].deviationLog10!)).toBeLessThan(1e-9));
	});
});

describe('both row layouts give the same scheme', () => {
	const reference = () => fromJson(VESSEL3);

	it('one row per direction in a workbook, named steps, reverse rows far from their forward rows', async () => {
		const wb = new ExcelJS.Workbook();
		const cond = wb.addWorksheet('Conditions');
		cond.addRow(['condition', 'value', 'unit']);
		cond.addRow(['scheme name', VESSEL3.name]);
		cond.addRow(['temperature', VESSEL3.temperatureK, 'K']);
		cond.addRow(['opposing load', VESSEL3.forcePN, 'pN']);
		cond.addRow(['step size', VESSEL3.stepSizeNm, 'nm']);
		for (const [s, c] of Object.entries(VESSEL3.concentrationsM)) cond.addRow([`[${s}]`, c, 'M']);
		const states = wb.addWorksheet('States');
		states.addRow(['state', 'label']);
		for (const s of VESSEL3.states) states.addRow([s.id, s.label]);
		const reactions = wb.addWorksheet('Reactions');
		reactions.addRow(['reaction', 'equation', "ΔG°' (kJ/mol)"]);
		reactions.addRow(['ATP hydrolysis', 'ATP -> ADP + Pi', -30.5]);
		reactions.addRow(['GTP hydrolysis', 'GTP → GDP+Pi', VESSEL3.reactions[1].deltaG0kJPerMol]);
		const steps = wb.addWorksheet('Steps');
		steps.addRow(DIRECTION_HEADER);
		for (const row of directionRows(VESSEL3)) steps.addRow(row);
		const r = await imported(await bytesOf(wb), 'directions.xlsx');
		expect(r.scheme).toEqual(reference());
		expect(r.warnings).toEqual([]);
	});

	it('the same as CSV with # condition lines, semicolons and decimal commas', async () => {
		const lines = csvPreamble(VESSEL3);
		lines.push(csvLine(DIRECTION_HEADER, ';'));
		for (const row of directionRows(VESSEL3)) lines.push(csvLine(row.map((v) => (typeof v === 'number' ? String(v).replace('.', ',') : v)), ';'));
		const r = await imported(text(lines.join('\r\n')), 'directions.csv');
		expect(r.scheme).toEqual(reference());
		// every decimal comma is reported, none silently
		const commas = directionRows(VESSEL3).flat().filter((v) => typeof v === 'number' && String(v).includes('.') && !/e/.test(String(v)));
		expect(r.warnings.filter((w) => /decimal comma/.test(w.message))).toHaveLength(commas.length);
	});

	it('paired rows as CSV, with a byte-order mark', async () => {
		const header = ['step', 'from state', 'to state', 'k forward (1/s or 1/(M·s))', 'k backward (1/s or 1/(M·s))', 'binds', 'releases', 'displacement (nm)', 'load fraction', 'rel. uncertainty forward', 'rel. uncertainty backward'];
		const lines = ['\ufeff' + csvPreamble(VESSEL3)[0], ...csvPreamble(VESSEL3).slice(1), csvLine(header)];
		for (const s of VESSEL3.steps) {
			const x = s as (typeof VESSEL3.steps)[number] & Record<string, unknown>;
			lines.push(csvLine([s.id, s.from, s.to, s.kForward, s.kBackward, (x.binds as string[] | undefined)?.join(', ') ?? null, (x.releases as string[] | undefined)?.join(', ') ?? null, (x.displacementNm as number) ?? null, (x.loadFraction as number) ?? null, (x.relUncertaintyForward as number) ?? null, (x.relUncertaintyBackward as number) ?? null]));
		}
		const r = await imported(text(lines.join('\n')), 'paired.csv');
		expect(r.scheme).toEqual(reference());
	});

	it('unnamed direction rows pair by their states; a missing reverse row is a zero rate with a warning', async () => {
		const simple = { temperatureK: 298.15, concentrationsM: {}, reactions: [], states: [{ id: 'A' }, { id: 'B' }, { id: 'C' }], steps: [{ id: 's1', from: 'A', to: 'B', kForward: 5, kBackward: 2 }, { id: 's2', from: 'B', to: 'C', kForward: 7, kBackward: 0 }, { id: 's3', from: 'C', to: 'A', kForward: 3, kBackward: 1.5 }] };
		const csv = ['from state,to state,rate (1/s)', 'A,B,5', 'B,C,7', 'B,A,2', 'C,A,3', 'A,C,1.5'].join('\n');
		const r = await imported(text(csv), 'unnamed.csv');
		expect(r.scheme).toEqual(fromJson(simple));
		expect(r.warnings).toHaveLength(2); // no temperature given; no row C → B
		expect(r.warnings.find((w) => /No row for C → B/.test(w.message))).toMatchObject({ sheet: 'unnamed.csv', row: 3, column: 'A' });
	});

	it('two unnamed rows for the same direction are ambiguous and reported at the second', async () => {
		const csv = ['# temperature: 25 °C', 'from state,to state,rate (1/s)', 'A,B,5', 'B,A,2', 'A,B,9', 'B,A,1'].join('\n');
		const r = await importRateTable(text(csv), 'parallel.csv');
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.errors.map((e) => [e.row, e.column])).toEqual([[5, 'A'], [6, 'A']]);
		expect(r.errors[0].message).toMatch(/fill in the step column/);
	});
});

describe('the broken-file corpus: each problem at its sheet, row and column', () => {
	for (const c of CORPUS) {
		it(c.name, async () => {
			const { bytes, letters } = await buildCase(c);
			const r = await importRateTable(bytes, `${c.name}.xlsx`);
			const errors = r.ok ? [] : r.errors;
			const wantErrors = c.expect.filter((e) => e.level === 'error');
			expect(r.ok).toBe(wantErrors.length === 0);
			c.expect.forEach((e, i) => {
				const pool = e.level === 'error' ? errors : r.warnings;
				const hit = pool.find((x) => x.sheet === e.sheet && x.row === e.row && x.column === letters[i] && e.message.test(x.message));
				expect(hit, `${e.level} at ${e.sheet}!${letters[i]}${e.row} matching ${e.message} among ${JSON.stringify(pool)}`).toBeDefined();
			});
			// nothing else goes wrong: exactly the expected errors
			expect(errors).toHaveLength(wantErrors.length);
		});
	}

	it('a decimal comma is read as the number it means, not dropped', async () => {
		const { bytes } = await buildCase(CORPUS.find((c) => c.name.startsWith('decimal comma'))!);
		const r = await imported(bytes, 'comma.xlsx');
		expect(r.scheme.steps[1].loadFraction).toBe(0.27);
	});

	it('a formula with a saved result gives that result; text with stray spaces is read', async () => {
		const wb = await loadBook(await filledTemplate(VESSEL3));
		const ws = wb.getWorksheet('Steps')!;
		ws.getCell('D3').value = { formula: '2*406.125', result: 812.25 } as ExcelJS.CellFormulaValue;
		ws.getCell('E4').value = '  2.9e6 ';
		const r = await imported(await bytesOf(wb), 'formula.xlsx');
		expect(r.scheme).toEqual(fromJson(VESSEL3));
	});

	it('a decimal comma in a comma-separated file is an error, not a silently truncated rate', async () => {
		const csv = ['# temperature: 25 °C', 'from state,to state,rate (1/s)', 'A,B,5', 'B,A,0,5'].join('\n');
		const r = await importRateTable(text(csv), 'split.csv');
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.errors).toEqual([expect.objectContaining({ sheet: 'split.csv', row: 4, column: 'D' })]);
		expect(r.errors[0].message).toMatch(/decimal comma/);
	});

	it('a CSV problem is reported at its line and lettered column, a bad # line at its line', async () => {
		const csv = ['# temperature: 25 °C', '# reaction: ATP hydrolysis | ATP → ADP + Pi', 'step,from state,to state,k forward (1/s),k backward (1/s)', 's1,A,B,5,2', 's2,B,Z,x1,1', 's3,B,A,1,1'].join('\n');
		const r = await importRateTable(text(csv), 'broken.csv');
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.errors.map((e) => [e.row, e.column])).toEqual([[2, null], [5, 'D']]);
		expect(r.errors[1].message).toMatch(/"x1" is not a number/);
	});
});
