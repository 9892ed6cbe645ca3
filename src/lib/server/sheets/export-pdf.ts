/**
 * The audit as a PDF report for reviewers: summary, the scheme's diagram (vector drawing), the tables,
 * findings and cautions, provenance, and a signature block (signer, time, content hash; "awaiting
 * signature" while unsigned).
 *
 * Fonts: IBM Plex Sans, complete (Latin, Greek, arrows; from @ibm/plex-sans), and the Latin subset of Plex Mono
 * (from @fontsource), unwrapped from WOFF and embedded; nothing is fetched from the network. Text passes through
 * `pdfText`, which writes out the few signs the font lacks (⁻¹ as ^-1). The diagram is laid out headless with d3-force (its
 * default random source is a fixed-seed LCG, so the same scheme gives the same picture); parallel steps
 * between two states are drawn as curves bowed apart. Schemes above DIAGRAM_MAX_STATES states get no
 * diagram (it would be unreadable on a page).
 */
import { forceCenter, forceCollide, forceLink, forceManyBody, forceSimulation, type SimulationNodeDatum } from 'd3-force';
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { inflateSync } from 'node:zlib';
import * as fontkit from 'fontkit';
import PDFDocument from 'pdfkit';
import type { Audit, Scheme } from '../../engine/index';
import {
	cautionsOf,
	cycleAffinity,
	findingsOf,
	netReactionText,
	overallVerdict,
	provenanceRows,
	verdictCounts,
	consistencyDecided,
	type Provenance
} from './audit-tables';

export interface Signature {
	signer: string;
	signedAt: string;
	comment: string;
	sha256: string;
	violationAcknowledged?: boolean;
	/** SHA-256 fingerprint of the server's Ed25519 key that signed the record, and where its public half is shown. */
	keyFingerprint?: string | null;
	publicKeyUrl?: string;
}

export const DIAGRAM_MAX_STATES = 40;
/** Rows of a long table printed in the PDF; the workbook and CSV carry them all. */
export const PDF_TABLE_ROWS = 80;

const require = createRequire(import.meta.url);
/** IBM Plex Sans complete (Latin, Greek, arrows) for text; the Latin subset of Plex Mono for numbers and hashes. */
const sansFile = (style: 'Regular' | 'SemiBold') =>
	woffToSfnt(readFileSync(require.resolve(`@ibm/plex-sans/fonts/complete/woff/IBMPlexSans-${style}.woff`)));
const monoFile = () => woffToSfnt(readFileSync(require.resolve('@fontsource/ibm-plex-mono/files/ibm-plex-mono-latin-400-normal.woff')));

/**
 * WOFF 1.0 → the plain TrueType/OpenType font it wraps (W3C WOFF File Format 1.0: 44-byte header, 20-byte
 * table entries, each table zlib-compressed when compLength < origLength). fontkit's own WOFF reader
 * fails on these files' glyph tables, so pdfkit gets the unwrapped font.
 */
export function woffToSfnt(woff: Buffer): Buffer {
	if (woff.toString('latin1', 0, 4) !== 'wOFF') return woff;
	const flavor = woff.readUInt32BE(4);
	const numTables = woff.readUInt16BE(12);
	const tables: { tag: string; checksum: number; data: Buffer }[] = [];
	for (let i = 0; i < numTables; i++) {
		const e = 44 + i * 20;
		const offset = woff.readUInt32BE(e + 4);
		const compLength = woff.readUInt32BE(e + 8);
		const origLength = woff.readUInt32BE(e + 12);
		const raw = woff.subarray(offset, offset + compLength);
		tables.push({ tag: woff.toString('latin1', e, e + 4), checksum: woff.readUInt32BE(e + 16), data: compLength < origLength ? inflateSync(raw) : raw });
	}
	let entrySelector = 0;
	while (2 ** (entrySelector + 1) <= numTables) entrySelector++;
	const searchRange = 2 ** entrySelector * 16;
	const head = Buffer.alloc(12 + 16 * numTables);
	head.writeUInt32BE(flavor, 0);
	head.writeUInt16BE(numTables, 4);
	head.writeUInt16BE(searchRange, 6);
	head.writeUInt16BE(entrySelector, 8);
	head.writeUInt16BE(numTables * 16 - searchRange, 10);
	const bodies: Buffer[] = [];
	let offset = head.length;
	tables.forEach((t, i) => {
		const r = 12 + i * 16;
		head.write(t.tag, r, 4, 'latin1');
		head.writeUInt32BE(t.checksum, r + 4);
		head.writeUInt32BE(offset, r + 8);
		head.writeUInt32BE(t.data.length, r + 12);
		const padded = Buffer.alloc((t.data.length + 3) & ~3);
		t.data.copy(padded);
		bodies.push(padded);
		offset += padded.length;
	});
	return Buffer.concat([head, ...bodies]);
}

let fonts: { sans: Buffer; sansBold: Buffer; mono: Buffer; covers: (codePoint: number) => boolean } | null = null;
function loadFonts() {
	if (!fonts) {
		const sans = sansFile('Regular');
		const face = fontkit.create(sans) as unknown as { hasGlyphForCodePoint(c: number): boolean };
		fonts = { sans, sansBold: sansFile('SemiBold'), mono: monoFile(), covers: (c) => face.hasGlyphForCodePoint(c) };
	}
	return fonts;
}

/** The few signs of our own text that IBM Plex Sans has no glyph for, written out. */
const REPLACE: [RegExp, string][] = [
	[/⁻¹/g, '^-1'],
	[/⁻/g, '^-'],
	[/₊/g, '+'],
	[/₋/g, '-'],
	[/⇌/g, '<->']
];

/** Text the embedded font can show: Latin, Greek and arrows as they are, anything else it lacks as '?'. */
export function pdfText(text: string): string {
	const { covers } = loadFonts();
	const spelled = REPLACE.reduce((t, [pattern, by]) => t.replace(pattern, by), text);
	return [...spelled].map((c) => (c === '\n' || covers(c.codePointAt(0)!) ? c : '?')).join('');
}

/** 4 significant digits; exponent form outside 1e-3…1e5; '—' for missing. */
export function formatNumber(x: number | null | undefined): string {
	if (x === null || x === undefined || !Number.isFinite(x)) return '—';
	if (x === 0) return '0';
	const a = Math.abs(x);
	if (a < 1e-3 || a >= 1e5) return x.toExponential(3).replace('e+', 'e');
	return String(Number(x.toPrecision(4)));
}

const PAGE = { width: 595.28, height: 841.89, margin: 48 };
const INK = '#1d2a33';
const MUTED = '#5b6b75';
const LINE = '#9fb0ba';

type Doc = PDFKit.PDFDocument;

function heading(doc: Doc, text: string) {
	ensureSpace(doc, 60);
	doc.moveDown(0.8).font('bold').fontSize(12).fillColor(INK).text(pdfText(text), PAGE.margin, doc.y);
	doc.moveDown(0.3).font('sans').fontSize(9);
}

function ensureSpace(doc: Doc, needed: number) {
	if (doc.y + needed > PAGE.height - PAGE.margin) doc.addPage();
}

interface PdfColumn {
	header: string;
	width: number;
	align?: 'left' | 'right';
	mono?: boolean;
}

function table(doc: Doc, columns: PdfColumn[], rows: string[][], note?: string) {
	const x0 = PAGE.margin;
	const total = columns.reduce((s, c) => s + c.width, 0);
	const scale = (PAGE.width - 2 * PAGE.margin) / total;
	const widths = columns.map((c) => c.width * scale);
	const pad = 2;
	const drawRow = (cells: string[], bold: boolean) => {
		doc.fontSize(7);
		const heights = cells.map((t, i) => {
			doc.font(bold ? 'bold' : columns[i].mono ? 'mono' : 'sans');
			return doc.heightOfString(pdfText(t), { width: widths[i] - 2 * pad });
		});
		const h = Math.max(...heights) + 2 * pad;
		if (doc.y + h > PAGE.height - PAGE.margin) {
			doc.addPage();
			if (!bold) drawRow(columns.map((c) => c.header), true);
		}
		const y = doc.y;
		let x = x0;
		cells.forEach((t, i) => {
			doc.font(bold ? 'bold' : columns[i].mono ? 'mono' : 'sans').fillColor(INK);
			doc.text(pdfText(t), x + pad, y + pad, { width: widths[i] - 2 * pad, align: bold ? 'left' : columns[i].align ?? 'left', lineBreak: true });
			x += widths[i];
		});
		doc.moveTo(x0, y + h).lineTo(x0 + widths.reduce((a, b) => a + b, 0), y + h).lineWidth(bold ? 0.8 : 0.3).strokeColor(LINE).stroke();
		doc.x = x0;
		doc.y = y + h;
	};
	drawRow(columns.map((c) => c.header), true);
	for (const r of rows) drawRow(r, false);
	if (note) doc.moveDown(0.3).font('sans').fontSize(8).fillColor(MUTED).text(pdfText(note), x0, doc.y);
	doc.fillColor(INK).fontSize(9);
}

interface LaidOutNode extends SimulationNodeDatum {
	id: string;
}

/** Positions of the states in a box, by a force layout run to rest. */
export function layoutScheme(scheme: Scheme, width: number, height: number): Map<string, { x: number; y: number }> {
	const nodes: LaidOutNode[] = scheme.states.map((s) => ({ id: s.id }));
	const pairs = new Map<string, { source: string; target: string }>();
	for (const s of scheme.steps) pairs.set([s.from, s.to].sort().join('\u0000'), { source: s.from, target: s.to });
	const sim = forceSimulation(nodes)
		.force('link', forceLink<LaidOutNode, { source: string; target: string }>([...pairs.values()]).id((d) => d.id).distance(70))
		.force('charge', forceManyBody().strength(-260))
		.force('center', forceCenter(0, 0))
		.force('collide', forceCollide(30))
		.stop();
	for (let i = 0; i < 400; i++) sim.tick();
	const xs = nodes.map((n) => n.x ?? 0);
	const ys = nodes.map((n) => n.y ?? 0);
	const [minX, maxX, minY, maxY] = [Math.min(...xs), Math.max(...xs), Math.min(...ys), Math.max(...ys)];
	const inset = 26;
	const s = Math.min((width - 2 * inset) / Math.max(maxX - minX, 1), (height - 2 * inset) / Math.max(maxY - minY, 1), 1.6);
	const cx = (minX + maxX) / 2;
	const cy = (minY + maxY) / 2;
	return new Map(nodes.map((n) => [n.id, { x: width / 2 + ((n.x ?? 0) - cx) * s, y: height / 2 + ((n.y ?? 0) - cy) * s }]));
}

function diagram(doc: Doc, scheme: Scheme) {
	const width = PAGE.width - 2 * PAGE.margin;
	const height = Math.min(300, 120 + scheme.states.length * 18);
	ensureSpace(doc, height + 20);
	const x0 = PAGE.margin;
	const y0 = doc.y;
	const at = layoutScheme(scheme, width, height);
	const radius = scheme.states.length > 16 ? 11 : 15;
	const groups = new Map<string, typeof scheme.steps>();
	for (const s of scheme.steps) {
		const key = [s.from, s.to].sort().join('\u0000');
		if (!groups.has(key)) groups.set(key, []);
		groups.get(key)!.push(s);
	}
	doc.save();
	doc.rect(x0, y0, width, height).lineWidth(0.4).strokeColor(LINE).stroke();
	for (const group of groups.values()) {
		group.forEach((step, k) => {
			const a = at.get(step.from)!;
			const b = at.get(step.to)!;
			const [ax, ay, bx, by] = [x0 + a.x, y0 + a.y, x0 + b.x, y0 + b.y];
			const len = Math.hypot(bx - ax, by - ay) || 1;
			// a canonical normal per state pair, so opposite-direction parallel steps bow to opposite sides
			const sign = step.from < step.to ? 1 : -1;
			const nx = (-(by - ay) / len) * sign;
			const ny = ((bx - ax) / len) * sign;
			const bow = (k - (group.length - 1) / 2) * 40;
			const cx = (ax + bx) / 2 + nx * bow;
			const cy = (ay + by) / 2 + ny * bow;
			doc.moveTo(ax, ay).quadraticCurveTo(cx, cy, bx, by).lineWidth(0.9).strokeColor(step.kBackward === 0 || step.kForward === 0 ? '#b3541e' : INK).stroke();
			// arrowhead in the forward direction, at the curve's midpoint
			const mx = 0.25 * ax + 0.5 * cx + 0.25 * bx;
			const my = 0.25 * ay + 0.5 * cy + 0.25 * by;
			const tx = bx - ax;
			const ty = by - ay;
			const tl = Math.hypot(tx, ty) || 1;
			const [ux, uy] = [tx / tl, ty / tl];
			doc.moveTo(mx + ux * 4, my + uy * 4).lineTo(mx - ux * 3 - uy * 3, my - uy * 3 + ux * 3).lineTo(mx - ux * 3 + uy * 3, my - uy * 3 - ux * 3).closePath().fillColor(INK).fill();
			const label = pdfText(step.id);
			doc.font('sans').fontSize(6.5).fillColor(MUTED);
			const lw = doc.widthOfString(label);
			doc.text(label, mx + uy * 7 - lw / 2, my - ux * 7 - 4, { lineBreak: false });
		});
	}
	for (const s of scheme.states) {
		const p = at.get(s.id)!;
		doc.circle(x0 + p.x, y0 + p.y, radius).lineWidth(1).fillAndStroke('#ffffff', INK);
		const label = pdfText(s.id);
		doc.font('bold').fontSize(radius > 12 ? 8 : 6.5).fillColor(INK);
		const w = doc.widthOfString(label);
		const size = w > 2 * radius - 4 ? Math.max(4.5, ((radius > 12 ? 8 : 6.5) * (2 * radius - 4)) / w) : radius > 12 ? 8 : 6.5;
		doc.fontSize(size);
		doc.text(label, x0 + p.x - doc.widthOfString(label) / 2, y0 + p.y - size / 2 - 1, { lineBreak: false });
	}
	doc.restore();
	doc.x = x0;
	doc.y = y0 + height + 4;
	doc.font('sans').fontSize(7.5).fillColor(MUTED).text(pdfText('States as circles; each line is one reversible step, its arrowhead pointing in the forward direction; parallel steps are bowed apart; orange lines have a zero rate.'), x0, doc.y, { width });
	doc.fillColor(INK);
}

export async function auditPdf(audit: Audit, scheme: Scheme | null, provenance: Provenance, signature: Signature | null = null): Promise<Uint8Array> {
	const f = loadFonts();
	const doc = new PDFDocument({
		size: 'A4',
		margin: PAGE.margin,
		bufferPages: true,
		info: { Title: pdfText(`Escapement audit${scheme?.name ? `: ${scheme.name}` : ''}`), Author: pdfText(provenance.createdBy), Creator: 'Escapement', CreationDate: new Date(provenance.createdAt) }
	});
	const chunks: Buffer[] = [];
	doc.on('data', (c: Buffer) => chunks.push(c));
	const done = new Promise<void>((resolve, reject) => {
		doc.on('end', () => resolve());
		doc.on('error', reject);
	});
	doc.registerFont('sans', f.sans);
	doc.registerFont('bold', f.sansBold);
	doc.registerFont('mono', f.mono);

	const v = verdictCounts(audit);
	const o = audit.observables;
	doc.font('bold').fontSize(18).fillColor(INK).text('Escapement audit report');
	doc.font('sans').fontSize(11).fillColor(MUTED).text(pdfText(scheme?.name || provenance.sourceFileName || 'unnamed scheme'));
	doc.moveDown(0.6).font('bold').fontSize(11).fillColor(INK).text(pdfText(overallVerdict(audit)));
	doc.moveDown(0.4).font('sans').fontSize(9.5);
	const lines = [
		`States: ${audit.states.length}   Steps: ${audit.steps.length}   Cycles: ${audit.cycleCount}${audit.cyclesComplete ? ' (all cycles listed)' : ` (listing incomplete; verdicts ${consistencyDecided(audit) ? 'decided for every cycle by the cycle basis' : 'not decided for every cycle'})`}`,
		`Verdicts: ${v.consistent} consistent, ${v.violation} violation, ${v.irreversible} irreversible, ${v.unbalanced} unbalanced`,
		`mean velocity: ${formatNumber(o.velocityNmPerS)} nm/s`,
		`effective diffusion coefficient: ${formatNumber(o.diffusionNm2PerS)} nm²/s`,
		`randomness: ${formatNumber(o.randomness)}`,
		// The engine reports null when a step with a zero rate carries net flux: the entropy production is infinite.
		`entropy production: ${o.entropyProductionKTPerS === null ? 'infinite (a step with a zero rate carries net flux)' : `${formatNumber(o.entropyProductionKTPerS)} kB/s`}`,
		...Object.entries(o.reactionRatesPerS ?? {}).map(([id, r]) => `turnover of ${id}: ${formatNumber(r)} /s`),
		`efficiency: ${formatNumber(o.efficiency)}${o.efficiencyRegime ? ` (${o.efficiencyRegime} regime)` : ''}`,
		// audits stored before the stall force was part of the audit have no such key
		...(o.stallForcesPN === undefined
			? []
			: [`stall force: ${o.stallForcePN === null ? 'none (see the findings)' : `${formatNumber(o.stallForcePN)} pN`}${(o.stallForcesPN?.length ?? 0) > 1 ? ` (all sign changes of V: ${o.stallForcesPN!.map((f) => formatNumber(f)).join(', ')} pN)` : ''}`])
	];
	const c = (audit as Partial<Audit>).conditions;
	if (c) lines.push(`Conditions: ${formatNumber(c.temperatureK)} K, opposing load ${formatNumber(c.forcePN)} pN, ${Object.entries(c.concentrationsM).map(([s, x]) => `[${s}] ${formatNumber(x)} M`).join(', ') || 'no species'}`);
	for (const l of lines) doc.text(pdfText(l));

	if (scheme) {
		heading(doc, 'Scheme');
		if (scheme.states.length <= DIAGRAM_MAX_STATES) diagram(doc, scheme);
		else doc.text(pdfText(`The scheme has ${scheme.states.length} states; a diagram is drawn for up to ${DIAGRAM_MAX_STATES}.`));
	}

	const findings = findingsOf(audit);
	if (findings.length) {
		heading(doc, 'Findings');
		for (const x of findings) doc.text(pdfText(`• ${x}`), { indent: 0 });
	}
	const correction = (audit as Partial<Audit>).correction;
	if (correction && correction.feasible === false) {
		heading(doc, 'No consistent correction');
		doc.text(pdfText(correction.reason ?? 'No change of the free rates restores consistency.'));
	} else if (correction && correction.changes.length) {
		heading(doc, 'Smallest rate changes that make every cycle consistent');
		table(
			doc,
			[{ header: 'step', width: 60 }, { header: 'rate', width: 60 }, { header: 'entered', width: 80, align: 'right' }, { header: 'consistent value', width: 80, align: 'right' }, { header: 'factor', width: 60, align: 'right' }],
			correction.changes.map((ch) => [ch.stepId, ch.rate === 'kForward' ? 'k forward' : 'k backward', formatNumber(ch.from), formatNumber(ch.to), formatNumber(ch.factor)])
		);
	}

	heading(doc, 'Cycles');
	const cycles = audit.cycles.slice(0, PDF_TABLE_ROWS);
	table(
		doc,
		[
			{ header: '#', width: 18, align: 'right' },
			{ header: 'states', width: 90 },
			{ header: 'verdict', width: 50 },
			{ header: 'deviation (log10)', width: 50, align: 'right' },
			{ header: 'uncertainty (log10)', width: 50, align: 'right' },
			{ header: 'J+ (1/s)', width: 48, align: 'right' },
			{ header: 'J− (1/s)', width: 48, align: 'right' },
			{ header: 'net flux (1/s)', width: 48, align: 'right' },
			{ header: 'affinity (kBT)', width: 44, align: 'right' },
			{ header: 'net reaction', width: 70 },
			{ header: 'displ. (nm)', width: 36, align: 'right' }
		],
		cycles.map((cy, i) => [
			String(i + 1),
			[...cy.states, cy.states[0]].join(' → '),
			cy.verdict,
			formatNumber(cy.deviationLog10),
			formatNumber(cy.sigmaLog10),
			formatNumber(cy.forwardFlux),
			formatNumber(cy.backwardFlux),
			formatNumber(cy.netFlux),
			formatNumber(cycleAffinity(audit, i)),
			netReactionText(cy.netReaction),
			formatNumber(cy.displacementNm)
		]),
		audit.cycles.length > PDF_TABLE_ROWS ? `${audit.cycles.length - PDF_TABLE_ROWS} more cycles are in the workbook and CSV exports.` : undefined
	);

	heading(doc, 'State probabilities');
	const label = new Map((scheme?.states ?? []).map((s) => [s.id, s.label ?? '']));
	table(
		doc,
		[{ header: 'state', width: 70 }, { header: 'label', width: 200 }, { header: 'probability', width: 90, align: 'right' }, { header: 'log10 probability', width: 90, align: 'right' }],
		audit.states.slice(0, PDF_TABLE_ROWS).map((s) => [s.id, label.get(s.id) ?? '', formatNumber(s.probability), formatNumber(s.probabilityLog10)]),
		audit.states.length > PDF_TABLE_ROWS ? `${audit.states.length - PDF_TABLE_ROWS} more states are in the workbook and CSV exports.` : undefined
	);

	heading(doc, 'Step fluxes');
	const steps = new Map((scheme?.steps ?? []).map((s) => [s.id, s]));
	table(
		doc,
		[{ header: 'step', width: 50 }, { header: 'from → to', width: 80 }, { header: 'effective rate forward (1/s)', width: 100, align: 'right' }, { header: 'effective rate backward (1/s)', width: 100, align: 'right' }, { header: 'net flux (1/s)', width: 90, align: 'right' }],
		audit.steps.slice(0, PDF_TABLE_ROWS).map((s) => {
			const st = steps.get(s.id);
			return [s.id, st ? `${st.from} → ${st.to}` : '', formatNumber(s.forwardRate), formatNumber(s.backwardRate), formatNumber(s.netFlux)];
		}),
		audit.steps.length > PDF_TABLE_ROWS ? `${audit.steps.length - PDF_TABLE_ROWS} more steps are in the workbook and CSV exports.` : undefined
	);

	heading(doc, 'Cautions');
	for (const x of cautionsOf(audit)) doc.text(pdfText(`• ${x}`));

	heading(doc, 'Provenance');
	table(doc, [{ header: 'item', width: 110 }, { header: 'value', width: 385, mono: true }], provenanceRows(provenance).map(([k, val]) => [k, val]));

	heading(doc, 'Signature');
	ensureSpace(doc, 90);
	const boxY = doc.y;
	const boxW = PAGE.width - 2 * PAGE.margin;
	doc.font('sans').fontSize(9);
	if (signature) {
		doc.text(pdfText(`Signed by: ${signature.signer}`), PAGE.margin + 8, boxY + 8);
		doc.text(pdfText(`Signed at: ${signature.signedAt}`));
		if (signature.comment) doc.text(pdfText(`Comment: ${signature.comment}`), { width: boxW - 16 });
		if (signature.violationAcknowledged) doc.text(pdfText('Violating cycles acknowledged by the signer.'));
		doc.text('Content hash (SHA-256):');
		doc.font('mono').fontSize(8).text(signature.sha256);
		doc.font('sans').fontSize(9);
		if (signature.keyFingerprint) {
			doc.text(pdfText(`Record signed by the server with Ed25519; key fingerprint (SHA-256)${signature.publicKeyUrl ? `, public key at ${signature.publicKeyUrl}` : ''}:`), { width: boxW - 16 });
			doc.font('mono').fontSize(8).text(signature.keyFingerprint);
		} else doc.text(pdfText('No server signature (signed before records carried one).'));
	} else {
		doc.font('bold').text('Awaiting signature', PAGE.margin + 8, boxY + 8);
		doc.font('sans').text(pdfText('No reviewer has signed this audit yet. Signer: ____________________   Date: ____________'));
		if (provenance.auditSha256) {
			doc.text('Content hash to be signed (SHA-256):');
			doc.font('mono').fontSize(8).text(provenance.auditSha256);
		}
	}
	doc.rect(PAGE.margin, boxY, boxW, doc.y - boxY + 8).lineWidth(0.8).strokeColor(INK).stroke();
	doc.y += 12;

	const range = doc.bufferedPageRange();
	for (let i = range.start; i < range.start + range.count; i++) {
		doc.switchToPage(i);
		const bottom = doc.page.margins.bottom;
		doc.page.margins.bottom = 0;
		doc.font('sans').fontSize(7).fillColor(MUTED);
		doc.text(pdfText(`Escapement ${provenance.engineVersion} · ${provenance.createdAt} · page ${i + 1} of ${range.count}`), PAGE.margin, PAGE.height - PAGE.margin + 18, { lineBreak: false });
		doc.page.margins.bottom = bottom;
	}
	doc.end();
	await done;
	return new Uint8Array(Buffer.concat(chunks));
}
