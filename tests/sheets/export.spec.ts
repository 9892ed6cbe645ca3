import ExcelJS from 'exceljs';
import Papa from 'papaparse';
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { auditScheme, parseScheme, ENGINE_VERSION, type Audit, type Scheme } from '../../src/lib/engine/index';
import { auditCsv } from '../../src/lib/server/sheets/export-csv';
import { auditWorkbook, EXPORT_SHEETS } from '../../src/lib/server/sheets/export-xlsx';
import { EXAMPLE_SCHEME } from '../../src/lib/server/sheets/example';

function scheme(json: unknown): Scheme {
	const r = parseScheme(json);
	if (!r.ok) throw new Error(JSON.stringify(r.errors));
	return r.scheme;
}

/**
 * The template's invented example with its futile branch s5 ten times too fast (violations) and an
 * added slip step s6 that cannot go back (irreversible cycles); the main cycle stays consistent.
 */
function troubled(): Scheme {
	const json = structuredClone(EXAMPLE_SCHEME);
	json.steps.find((s) => s.id === 's5')!.kForward *= 10;
	json.steps.push({ id: 's6', from: 'T2', to: 'T0', kForward: 4, kBackward: 0, releases: ['ADP', 'Pi'], displacementNm: 0 });
	return scheme(json);
}

const provenance = (audit: Audit) => ({
	sourceFileName: 'vessel3.xlsx',
	sourceSha256: createHash('sha256').update('source bytes').digest('hex'),
	engineVersion: ENGINE_VERSION,
	createdAt: '2026-03-05T10:15:00.000Z',
	createdBy: 'Tobias Reinholt',
	auditSha256: createHash('sha256').update(JSON.stringify(audit)).digest('hex')
});

async function reread(bytes: Uint8Array): Promise<ExcelJS.Workbook> {
	const wb = new ExcelJS.Workbook();
	await wb.xlsx.load(Buffer.from(bytes) as unknown as ExcelJS.Buffer);
	return wb;
}

/** Row n (1-based, after the header) of a sheet as header → cell. */
function rowByHeader(ws: ExcelJS.Worksheet, n: number): Map<string, ExcelJS.Cell> {
	const out = new Map<string, ExcelJS.Cell>();
	ws.getRow(1).eachCell((h, c) => out.set(String(h.value), ws.getRow(n + 1).getCell(c)));
	return out;
}

const num = (cell: ExcelJS.Cell | undefined) => (cell?.value === null || cell?.value === undefined ? null : cell.value);
/** A spreadsheet has one zero: the audit's −0 is read back as 0. */
const z = (x: number | null) => (x === 0 ? 0 : x);

describe('audit workbook, re-read with exceljs and checked cell by cell', () => {
	const s = troubled();
	const audit = auditScheme(s);

	it('the audit under test has every kind of verdict the scheme can produce', () => {
		const verdicts = new Set(audit.cycles.map((c) => c.verdict));
		expect(verdicts.has('violation')).toBe(true);
		expect(verdicts.has('irreversible')).toBe(true);
		expect(verdicts.has('consistent')).toBe(true);
	});

	it('cycles: verdict words, deviation, uncertainty, fluxes, affinity, net reaction and displacement', async () => {
		const wb = await reread(await auditWorkbook(audit, s, provenance(audit)));
		const ws = wb.getWorksheet(EXPORT_SHEETS.cycles)!;
		expect(ws.actualRowCount).toBe(audit.cycles.length + 1);
		audit.cycles.forEach((c, i) => {
			const row = rowByHeader(ws, i + 1);
			expect(row.get('verdict')!.value).toBe(c.verdict);
			expect(num(row.get('log10 Π+/Π−'))).toBe(z(c.log10RateRatio));
			expect(num(row.get('expected log10'))).toBe(z(c.expectedLog10));
			expect(num(row.get('deviation (log10)'))).toBe(z(c.deviationLog10));
			expect(num(row.get('uncertainty (log10, 1 s.d.)'))).toBe(z(c.sigmaLog10));
			expect(num(row.get('one-way flux J+ (1/s)'))).toBe(z(c.forwardFlux));
			expect(num(row.get('one-way flux J− (1/s)'))).toBe(z(c.backwardFlux));
			expect(num(row.get('net flux (1/s)'))).toBe(z(c.netFlux));
			expect(num(row.get('affinity (kBT)'))).toBe(z(audit.cycleAffinitiesKT[i]));
			expect(num(row.get('displacement (nm)'))).toBe(z(c.displacementNm));
			expect(row.get('states')!.value).toBe([...c.states, c.states[0]].join(' → '));
			const net = row.get('net reaction')!.value as string;
			if (c.netReaction === null) expect(net).toMatch(/unbalanced/);
			else for (const [id, n] of Object.entries(c.netReaction)) expect(net).toContain(`${n} × ${id}`);
			if (typeof c.netFlux === 'number') expect(row.get('net flux (1/s)')!.numFmt).toMatch(/E\+00/);
		});
	});

	it('state probabilities, step fluxes and observables', async () => {
		const wb = await reread(await auditWorkbook(audit, s, provenance(audit)));
		const states = wb.getWorksheet(EXPORT_SHEETS.states)!;
		audit.states.forEach((st, i) => {
			const row = rowByHeader(states, i + 1);
			expect(row.get('state')!.value).toBe(st.id);
			expect(row.get('label')!.value).toBe(s.states[i].label);
			expect(row.get('probability')!.value).toBe(st.probability);
			expect(num(row.get('log10 probability'))).toBe(z(st.probabilityLog10));
		});
		const steps = wb.getWorksheet(EXPORT_SHEETS.steps)!;
		audit.steps.forEach((st, i) => {
			const row = rowByHeader(steps, i + 1);
			expect(row.get('step')!.value).toBe(st.id);
			expect(row.get('effective rate forward (1/s)')!.value).toBe(st.forwardRate);
			expect(row.get('effective rate backward (1/s)')!.value).toBe(st.backwardRate);
			expect(row.get('net flux (1/s)')!.value).toBe(st.netFlux);
			expect(row.get('k forward (1/s or 1/(M·s))')!.value).toBe(s.steps[i].kForward);
		});
		const obs = wb.getWorksheet(EXPORT_SHEETS.observables)!;
		const values = new Map<string, unknown>();
		obs.eachRow((r, n) => n > 1 && values.set(String(r.getCell(1).value), r.getCell(2).value));
		expect(values.get('mean velocity')).toBe(audit.observables.velocityNmPerS);
		expect(values.get('effective diffusion coefficient')).toBe(audit.observables.diffusionNm2PerS);
		expect(values.get('entropy production')).toBe(audit.observables.entropyProductionKTPerS);
		for (const [id, rate] of Object.entries(audit.observables.reactionRatesPerS)) expect(values.get(`turnover: ${id}`)).toBe(rate);
		expect(values.get('randomness') ?? null).toBe(audit.observables.randomness);
		expect(values.get('stall force') ?? null).toBe(audit.observables.stallForcePN);
	});

	it('summary counts, conditions and provenance', async () => {
		const p = provenance(audit);
		const wb = await reread(await auditWorkbook(audit, s, p));
		const kv = (name: string) => {
			const m = new Map<string, unknown>();
			wb.getWorksheet(name)!.eachRow((r) => m.set(String(r.getCell(1).value), r.getCell(2).value));
			return m;
		};
		const summary = kv(EXPORT_SHEETS.summary);
		expect(summary.get('cycles in violation')).toBe(audit.cycles.filter((c) => c.verdict === 'violation').length);
		expect(summary.get('cycles irreversible')).toBe(audit.cycles.filter((c) => c.verdict === 'irreversible').length);
		expect(summary.get('cycles consistent')).toBe(audit.cycles.filter((c) => c.verdict === 'consistent').length);
		expect(String(summary.get('overall'))).toMatch(/^NOT CONSISTENT/);
		const cond = kv(EXPORT_SHEETS.conditions);
		expect(cond.get('temperature')).toBe(s.temperatureK);
		expect(cond.get('opposing load')).toBe(s.forcePN);
		for (const [sp, c] of Object.entries(s.concentrationsM)) expect(cond.get(`[${sp}]`)).toBe(c);
		const prov = kv(EXPORT_SHEETS.provenance);
		expect(prov.get('source file SHA-256')).toBe(p.sourceSha256);
		expect(prov.get('audit SHA-256')).toBe(p.auditSha256);
		expect(prov.get('engine version')).toBe(ENGINE_VERSION);
		expect(prov.get('audit run by')).toBe('Tobias Reinholt');
	});
});

describe('CSV export', () => {
	const hostile = scheme({
		temperatureK: 298.15,
		states: [{ id: '=HYPERLINK("http://evil.invalid","x")' }, { id: '+1+cmd|calc' }, { id: '-2+3' }, { id: '@SUM(A1)' }, { id: '\tTAB' }, { id: '-1' }],
		steps: [
			{ id: 's1', from: '=HYPERLINK("http://evil.invalid","x")', to: '+1+cmd|calc', kForward: 3, kBackward: 1e-9 },
			{ id: '\rCR', from: '+1+cmd|calc', to: '-2+3', kForward: 2, kBackward: 1e-7 },
			{ id: 's3', from: '-2+3', to: '@SUM(A1)', kForward: 5, kBackward: 1e-8 },
			{ id: 's4', from: '@SUM(A1)', to: '\tTAB', kForward: 1, kBackward: 2 },
			{ id: 's5', from: '\tTAB', to: '-1', kForward: 1, kBackward: 2 },
			{ id: 's6', from: '-1', to: '=HYPERLINK("http://evil.invalid","x")', kForward: 1, kBackward: 1e-6 }
		]
	});
	const audit = auditScheme(hostile);
	const parse = (csv: string) => Papa.parse<string[]>(csv.replace(/^\ufeff/, ''), { skipEmptyLines: true }).data;

	it('text that a spreadsheet would run as a formula is neutralised; plain numbers stay numbers', () => {
		const rows = parse(auditCsv(audit, 'states'));
		expect(rows[0]).toEqual(['state', 'probability', 'log10 probability']);
		const ids = rows.slice(1).map((r) => r[0]);
		for (const id of ids) expect(id).not.toMatch(/^[=+@\t\r]/);
		expect(ids).toEqual(["'=HYPERLINK(\"http://evil.invalid\",\"x\")", "'+1+cmd|calc", "'-2+3", "'@SUM(A1)", "'\tTAB", '-1']);
		rows.slice(1).forEach((r, i) => {
			expect(Number(r[1])).toBe(audit.states[i].probability);
			expect(Number(r[2])).toBe(audit.states[i].probabilityLog10);
		});
		// negative numbers appear bare, as numbers
		expect(rows.slice(1).some((r) => r[2].startsWith('-') && !r[2].startsWith("'"))).toBe(true);
	});

	it('steps: an id starting with a carriage return is neutralised and quoted; negative fluxes stay numbers', () => {
		const rows = parse(auditCsv(audit, 'steps'));
		expect(rows[2][0]).toBe("'\rCR");
		rows.slice(1).forEach((r, i) => {
			expect(Number(r[1])).toBe(audit.steps[i].forwardRate);
			expect(Number(r[3])).toBe(audit.steps[i].netFlux);
		});
	});

	it('cycles and observables round-trip through a CSV parser to the audit values', () => {
		const audit2 = auditScheme(troubled());
		const rows = parse(auditCsv(audit2, 'cycles'));
		const h = rows[0];
		expect(rows).toHaveLength(audit2.cycles.length + 1);
		audit2.cycles.forEach((c, i) => {
			const r = rows[i + 1];
			expect(r[h.indexOf('verdict')]).toBe(c.verdict);
			const dev = r[h.indexOf('deviation (log10)')];
			expect(dev === '' ? null : Number(dev)).toBe(c.deviationLog10);
			const net = r[h.indexOf('net flux (1/s)')];
			expect(net === '' ? null : Number(net)).toBe(c.netFlux);
		});
		const obs = parse(auditCsv(audit2, 'observables'));
		expect(Number(obs.find((r) => r[0] === 'mean velocity')![1])).toBe(audit2.observables.velocityNmPerS);
		expect(auditCsv(audit2, 'observables')).toMatch(/\r\n$/);
	});

	it('regression, an undecided basis-only audit was exported as decided: the summary says what was not checked', async () => {
		// the template's example with s5 and s1 each 10^0.006 too fast: every basis cycle stays within the 0.01 tolerance,
		// but their deviations sum to 0.012, so the basis alone cannot vouch for every cycle [der]
		const json = structuredClone(EXAMPLE_SCHEME);
		for (const id of ['s5', 's1']) json.steps.find((st) => st.id === id)!.kForward *= 10 ** 0.006;
		const spoiled = scheme(json);
		const undecided = auditScheme(spoiled, { maxCycles: 0 });
		expect(undecided.verdictCounts.violation).toBe(0);
		expect(undecided.consistencyComplete).toBe(false);
		expect(undecided.consistencyScope.deviationBoundLog10).toBeCloseTo(0.012, 4);
		const wb = await reread(await auditWorkbook(undecided, spoiled, provenance(undecided)));
		const m = new Map<string, unknown>();
		wb.getWorksheet(EXPORT_SHEETS.summary)!.eachRow((r) => m.set(String(r.getCell(1).value), r.getCell(2).value));
		expect(String(m.get('consistency decided for every cycle'))).toMatch(/^no: .*may deviate by up to 0\.012 log10 units/);
		expect(String(m.get('overall'))).toMatch(/^NOT DECIDED FOR EVERY CYCLE/);
		// the complete listing decides, and the same scheme is consistent on every cycle
		const listed = auditScheme(spoiled);
		expect(listed.consistencyComplete).toBe(true);
		expect(listed.verdictCounts.violation).toBe(0);
	});
});
