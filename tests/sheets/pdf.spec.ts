import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { getDocument } from 'pdfjs-dist/legacy/build/pdf.mjs';
import { auditScheme, parseScheme, ENGINE_VERSION, type Audit, type Scheme } from '../../src/lib/engine/index';
import { auditPdf } from '../../src/lib/server/sheets/export-pdf';
import { EXAMPLE_SCHEME } from '../../src/lib/server/sheets/example';
import { VESSEL3 } from '../fixtures/sheets/schemes';

function scheme(json: unknown): Scheme {
	const r = parseScheme(json);
	if (!r.ok) throw new Error(JSON.stringify(r.errors));
	return r.scheme;
}

/** Every page's text, as pdfjs extracts it, one string per page. */
async function pdfPages(bytes: Uint8Array): Promise<string[]> {
	const doc = await getDocument({ data: new Uint8Array(bytes), useSystemFonts: false, isEvalSupported: false }).promise;
	const pages: string[] = [];
	for (let i = 1; i <= doc.numPages; i++) {
		const content = await (await doc.getPage(i)).getTextContent();
		pages.push(content.items.map((it) => ('str' in it ? it.str + (it.hasEOL ? '\n' : ' ') : '')).join(''));
	}
	return pages;
}

/** The number printed after a label, e.g. "mean velocity: 12.34 nm/s" → 12.34. */
function figureAfter(text: string, label: string): number {
	const m = new RegExp(`${label}:\\s*(-?[0-9.]+(?:e-?[0-9]+)?)`).exec(text.replace(/\s+/g, ' '));
	if (!m) throw new Error(`no figure after "${label}" in: ${text.slice(0, 400)}`);
	return Number(m[1]);
}

const closeTo4 = (printed: number, value: number) => expect(Math.abs(printed - value)).toBeLessThanOrEqual(Math.abs(value) * 5e-4 + 1e-300);

const provenance = (audit: Audit) => ({
	sourceFileName: 'orrin1.xlsx',
	sourceSha256: createHash('sha256').update('the uploaded workbook').digest('hex'),
	engineVersion: ENGINE_VERSION,
	createdAt: '2026-03-05T10:15:00.000Z',
	createdBy: 'Tobias Reinholt',
	auditSha256: createHash('sha256').update(JSON.stringify(audit)).digest('hex')
});

describe('PDF report, opened with pdfjs', () => {
	const s = scheme(EXAMPLE_SCHEME);
	const audit = auditScheme(s);

	it('summary figures, verdict counts and the hashes are in the text; unsigned reports await a signature', async () => {
		const p = provenance(audit);
		const bytes = await auditPdf(audit, s, p, null);
		expect(Buffer.from(bytes.slice(0, 5)).toString('latin1')).toBe('%PDF-');
		const pages = await pdfPages(bytes);
		const all = pages.join('\n');
		const first = pages[0];
		closeTo4(figureAfter(first, 'mean velocity'), audit.observables.velocityNmPerS);
		closeTo4(figureAfter(first, 'effective diffusion coefficient'), audit.observables.diffusionNm2PerS);
		closeTo4(figureAfter(first, 'entropy production'), audit.observables.entropyProductionKTPerS!);
		closeTo4(figureAfter(first, 'turnover of ATP hydrolysis'), audit.observables.reactionRatesPerS['ATP hydrolysis']);
		const consistent = audit.cycles.filter((c) => c.verdict === 'consistent').length;
		expect(first.replace(/\s+/g, ' ')).toContain(`Verdicts: ${consistent} consistent, 0 violation`);
		expect(first).toContain(EXAMPLE_SCHEME.name);
		const flat = all.replace(/\s+/g, '');
		expect(flat).toContain(p.auditSha256);
		expect(flat).toContain(p.sourceSha256);
		expect(all).toMatch(/Awaiting signature/);
		expect(all).toMatch(/not the biology/);
		for (const st of s.states) expect(all).toContain(st.id);
	});

	it('a signed report shows signer, time, comment and the content hash', async () => {
		const sha256 = createHash('sha256').update('canonical audit').digest('hex');
		const bytes = await auditPdf(audit, s, provenance(audit), { signer: 'Dr. Nils Okafor', signedAt: '2026-03-06T08:00:00Z', comment: 'Rates checked against lab book 7.', sha256 });
		const all = (await pdfPages(bytes)).join('\n');
		expect(all).toContain('Dr. Nils Okafor');
		expect(all).toContain('2026-03-06T08:00:00Z');
		expect(all).toContain('Rates checked against lab book 7.');
		expect(all.replace(/\s+/g, '')).toContain(sha256);
		expect(all).not.toMatch(/Awaiting signature/);
	});

	it('cycle rows carry their verdict words and deviations, parallel steps are drawn, fonts are embedded', async () => {
		const v = scheme(VESSEL3);
		const a = auditScheme(v);
		const bytes = await auditPdf(a, v, provenance(a), null);
		const all = (await pdfPages(bytes)).join('\n').replace(/\s+/g, ' ');
		for (const c of a.cycles) expect(all).toContain(`${[...c.states, c.states[0]].join(' → ')} ${c.verdict}`);
		const raw = Buffer.from(bytes).toString('latin1');
		expect(raw).toMatch(/\/FontFile2|\/FontFile3|\/FontFile/);
		expect(raw).toMatch(/IBMPlexSans/);
		expect(raw).not.toMatch(/\/BaseFont \/Helvetica/);
	});

	it('the same audit gives the same diagram (deterministic layout)', async () => {
		const p = provenance(audit);
		const a = await auditPdf(audit, s, p, null);
		const b = await auditPdf(audit, s, p, null);
		const strip = (x: Uint8Array) => Buffer.from(x).toString('latin1').replace(/\/(CreationDate|ModDate) \([^)]*\)/g, '').replace(/\/ID \[<[^\]]*\]/g, '');
		expect(createHash('sha256').update(strip(a)).digest('hex')).toBe(createHash('sha256').update(strip(b)).digest('hex'));
	});

	it('draws Greek letters and arrows of labels as they are, and marks signs the font lacks', async () => {
		const greek = scheme({
			...EXAMPLE_SCHEME,
			states: EXAMPLE_SCHEME.states.map((st, i) => (i === 0 ? { ...st, label: 'ΔG° low, κ-state' } : i === 1 ? { ...st, label: '漢 bound' } : st))
		});
		const a = auditScheme(greek);
		const all = (await pdfPages(await auditPdf(a, greek, provenance(a), null))).join('\n');
		expect(all).toContain('ΔG° low, κ-state');
		expect(all).toContain('? bound'); // IBM Plex Sans has no CJK glyphs: a visible '?', never an empty box
		expect(all).toContain(' → ');
	});

	it('says the entropy production is infinite when a zero rate carries net flux (Schnakenberg 1976 [pub]: each such step adds J·ln(J+/0))', async () => {
		const oneWay = scheme({ ...EXAMPLE_SCHEME, steps: EXAMPLE_SCHEME.steps.map((st, i) => (i === 0 ? { ...st, kBackward: 0 } : st)) });
		const a = auditScheme(oneWay);
		expect(a.observables.entropyProductionKTPerS).toBeNull();
		const first = (await pdfPages(await auditPdf(a, oneWay, provenance(a), null)))[0].replace(/\s+/g, ' ');
		expect(first).toContain('entropy production: infinite');
	});
});
