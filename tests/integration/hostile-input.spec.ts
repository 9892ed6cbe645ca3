/**
 * Hostile input through hooks.server.ts to the real handlers (in-process): each case answers a 4xx that names the
 * field and the limit, echoes little of what was sent, saves nothing (row counts before and after), and the refusal
 * is in the activity log. Regression tests for what once reached a 500 or echoed too much.
 */
import ExcelJS from 'exceljs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { count, eq } from 'drizzle-orm';
import { db, makeLab, schema } from './db';
import { api, body, tokenFor } from './request';
import { page, signInAs, type CookieJar } from './pages';
import { triangleScheme, triangleWorkbook, upload } from './api-fixtures';
import { csvLine, DIRECTION_HEADER, zip, WORKBOOK_XML } from '../fixtures/sheets/build';
import { stopJobs } from '../../src/lib/server/jobs';
import { TEXT_LIMITS } from '../../src/lib/engine/scheme';
import { auditWorkbook } from '../../src/lib/server/sheets';
import { MAX_BODY_BYTES } from '../../src/hooks.server';
import { auditScheme, parseScheme } from '../../src/lib/engine';

let lab: Awaited<ReturnType<typeof makeLab>>;
let token: string;
let jar: CookieJar;
beforeAll(async () => {
	lab = await makeLab(['lead', 'modeller']);
	token = await tokenFor(lab.people.modeller.id);
	jar = (await signInAs(lab.people.modeller.email)).jar;
});
afterAll(async () => {
	await stopJobs();
});

const schemesOfLab = async () => (await db.select({ n: count() }).from(schema.schemes).where(eq(schema.schemes.labId, lab.lab.id)))[0].n;
const revisions = async () =>
	(await db.select({ n: count() }).from(schema.schemeRevisions).innerJoin(schema.schemes, eq(schema.schemes.id, schema.schemeRevisions.schemeId)).where(eq(schema.schemes.labId, lab.lab.id)))[0].n;

/** Calls `send`, expects a 4xx whose body names `field`, and that no scheme or revision was saved. */
async function refused(send: () => Promise<Response>, field: RegExp, status?: number) {
	const [s0, r0] = [await schemesOfLab(), await revisions()];
	const res = await send();
	const text = await res.text();
	if (res.status < 400 || res.status >= 500) throw new Error(`expected a 4xx, got ${res.status} ${text.slice(0, 300)}`);
	if (status) expect(res.status).toBe(status);
	expect(text).toMatch(field);
	expect([await schemesOfLab(), await revisions()]).toEqual([s0, r0]);
	return text;
}
const createJson = (payload: unknown) => () => api('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, { token, json: payload });
const withScheme = (patch: (s: ReturnType<typeof triangleScheme>) => void) => {
	const s = triangleScheme('Hostile');
	patch(s);
	return s;
};

describe('text that the database cannot hold, or that displays differently', () => {
	it('refuses a NUL character in a JSON text field, naming the field [trade]', async () => {
		await refused(createJson({ name: 'Kinesin\u0000', scheme: triangleScheme('x') }), /"path":"name".*NUL/);
	});
	it('refuses a lone surrogate in a description', async () => {
		await refused(createJson({ name: 'Kinesin', description: 'half \ud800 a pair', scheme: triangleScheme('x') }), /description.*surrogate/);
	});
	it('refuses a bidi override in a state label', async () => {
		await refused(createJson({ name: 'Kinesin', scheme: withScheme((s) => ((s.states[0] as { label?: string }).label = 'safe\u202egnp.exe')) }), /states\[0\]\.label/);
	});
	it('refuses a NUL in a form action field (the draft scheme form)', async () => {
		await refused(() => page('POST', `/labs/${lab.lab.slug}/schemes/new?/empty`, { jar, form: { name: 'Draft\u0000', scheme: JSON.stringify(triangleScheme('x')) } }), /name.*NUL/);
	});
	it('logs the refusals in the activity log', async () => {
		const rows = await db.select().from(schema.activityLog).where(eq(schema.activityLog.actorId, lab.people.modeller.id));
		const refusals = rows.filter((r) => r.kind === 'request-refused');
		expect(refusals.length).toBeGreaterThan(0);
		// In the lab's own activity, where its lead reads them, with the reason and without the input.
		expect(refusals.every((r) => r.labId === lab.lab.id)).toBe(true);
		expect(refusals.some((r) => (r.details as { reason?: string }).reason === 'hostile-text')).toBe(true);
		expect(JSON.stringify(refusals)).not.toContain('\u0000');
	});
});

describe('ids and species names', () => {
	it.each(['constructor', '__proto__', 'toString'])('refuses the species name %s, naming where it is [der]', async (name) => {
		const scheme = withScheme((s) => {
			(s.steps[0] as Record<string, unknown>).binds = [name];
			s.concentrationsM = JSON.parse(`{"${name}": 0.001}`);
		});
		await refused(createJson({ name: `Species ${name}`, scheme }), /binds\[0\]|concentrationsM/);
	});
	it('refuses two state ids that look alike (Latin A and Cyrillic А) [trade]', async () => {
		const scheme = withScheme((s) => {
			s.states = [{ id: 'A' }, { id: 'B' }, { id: '\u0410' }];
			s.steps = [
				{ id: 'a', from: 'A', to: 'B', kForward: 1, kBackward: 1 },
				{ id: 'b', from: 'B', to: '\u0410', kForward: 1, kBackward: 1 },
				{ id: 'c', from: '\u0410', to: 'A', kForward: 1, kBackward: 1 }
			];
		});
		await refused(createJson({ name: 'Look-alikes', scheme }), /states\[2\]\.id.*looks the same/);
	});
	it('refuses a bidi override inside a step id', async () => {
		await refused(createJson({ name: 'Bidi', scheme: withScheme((s) => (s.steps[1].id = 'b\u202e')) }), /steps\[1\]\.id/);
	});
	it(`refuses ids longer than ${TEXT_LIMITS.id} and labels longer than ${TEXT_LIMITS.label} characters, naming the limit`, async () => {
		await refused(createJson({ name: 'Long id', scheme: withScheme((s) => (s.steps[0].id = 'x'.repeat(TEXT_LIMITS.id + 1))) }), new RegExp(`steps\\[0\\]\\.id.*${TEXT_LIMITS.id}`));
		const label = 'y'.repeat(5 * 1024 * 1024);
		const text = await refused(createJson({ name: 'Long label', scheme: withScheme((s) => ((s.states[0] as { label?: string }).label = label)) }), new RegExp(`states\\[0\\]\\.label.*${TEXT_LIMITS.label}`));
		expect(text.length).toBeLessThan(5000);
	});
});

describe('numbers and query parameters', () => {
	it('refuses a concentration of 1e308 with the field and the limit', async () => {
		const scheme = withScheme((s) => {
			(s.steps[0] as Record<string, unknown>).binds = ['ATP'];
			s.concentrationsM = { ATP: 1e308 };
		});
		await refused(createJson({ name: 'Huge ATP', scheme }), /concentrationsM\.ATP/);
	});
});

describe('bodies', () => {
	it(`answers 413 to a body over ${MAX_BODY_BYTES / 1024 / 1024} MB, API and form action alike`, async () => {
		const big = new Uint8Array(50 * 1024 * 1024);
		await refused(() => page('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, { token, body: { bytes: big, type: 'application/json' }, headers: { 'content-length': String(big.length) } }), /too_large|limit/, 413);
		await refused(() => page('POST', `/labs/${lab.lab.slug}/schemes/new?/upload`, { jar, body: { bytes: big, type: 'multipart/form-data; boundary=x' }, headers: { 'content-length': String(big.length) } }), /limit/, 413);
	});
	it('answers 400 to a malformed multipart body, API and form action alike', async () => {
		const broken = '--b\r\nContent-Disposition: form-data; name="file"; filename="t.xlsx"\r\n\r\nno closing boundary';
		await refused(() => page('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, { token, body: { bytes: broken, type: 'multipart/form-data; boundary=b' } }), /cannot be read/, 400);
		await refused(() => page('POST', `/labs/${lab.lab.slug}/schemes/new?/upload`, { jar, body: { bytes: broken, type: 'multipart/form-data; boundary=b' } }), /cannot be read/, 400);
	});
});

describe('rate tables', () => {
	it('does not echo a 9 MB cell whole in the error', { timeout: 60_000 }, async () => {
		const huge = 'z'.repeat(9 * 1024 * 1024);
		const lines = ['# scheme name: Echo', '# temperature: 298.15 K', csvLine(DIRECTION_HEADER), csvLine(['a', 'E1', 'E2', huge, null, null, null, null, null]), csvLine(['a', 'E2', 'E1', 1, null, null, null, null, null])];
		const file = new TextEncoder().encode(lines.join('\r\n'));
		const form = new FormData();
		form.set('file', new File([file], 'echo.csv', { type: 'text/csv' }));
		const text = await refused(() => api('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, { token, form }), /characters/);
		expect(text.length).toBeLessThan(20_000);
	});
	it('refuses a workbook with macros, by name (.xlsm) and by content (a VBA project in an .xlsx) [trade]', async () => {
		const book = await triangleWorkbook();
		await refused(() => api('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, { token, form: upload(book, 'triangle.xlsm') }), /macros/);
		const withMacros = zip([
			{ name: '[Content_Types].xml', data: Buffer.from('<Types><Override ContentType="application/vnd.ms-excel.sheet.macroEnabled.main+xml" PartName="/xl/workbook.xml"/></Types>') },
			{ name: 'xl/workbook.xml', data: WORKBOOK_XML },
			{ name: 'xl/vbaProject.bin', data: Buffer.from('Attribute VB_Name = "Module1"') }
		]);
		await refused(() => api('POST', `/api/v1/labs/${lab.lab.slug}/schemes`, { token, form: upload(withMacros, 'renamed.xlsx') }), /macros/);
	});
});

describe('exports', () => {
	it('writes formula-like text into xlsx as inert text (leading apostrophe), never as a formula [trade]', async () => {
		const scheme = withScheme((s) => {
			s.name = '=HYPERLINK("https://evil.example","open")';
			s.steps[0].id = '+cmd';
		});
		const parsed = parseScheme(scheme);
		if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
		const audit = auditScheme(parsed.scheme);
		const bytes = await auditWorkbook(audit, parsed.scheme, { sourceFileName: null, sourceSha256: null, engineVersion: '0', createdAt: new Date(0).toISOString(), createdBy: 'Kestrel Motility Lab' });
		const wb = new ExcelJS.Workbook();
		await wb.xlsx.load(Buffer.from(bytes) as unknown as ExcelJS.Buffer);
		const texts: string[] = [];
		let formulas = 0;
		wb.eachSheet((ws) =>
			ws.eachRow((row) =>
				row.eachCell((cell) => {
					if (cell.type === ExcelJS.ValueType.Formula) formulas++;
					if (typeof cell.value === 'string') texts.push(cell.value);
				})
			)
		);
		expect(formulas).toBe(0);
		expect(texts.filter((t) => /^[=+\-@]/.test(t) && !/^[+-]?\d/.test(t))).toEqual([]);
		expect(texts.some((t) => t.startsWith("'=HYPERLINK"))).toBe(true);
	});
});
