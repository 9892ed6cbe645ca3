/**
 * POST …/schemes/[scheme]/preview with an edited scheme document (what the scheme page's unsaved tables hold):
 * the numbers follow the edit and agree with the closed-form steady state of a three-state cycle, computed here
 * independently of the engine; bad documents are refused at their JSON path; nothing is stored.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { count, eq } from 'drizzle-orm';
import { db, schema, makeLab } from './db';
import { api, body, tokenFor } from './request';
import { triangleScheme } from './api-fixtures';
import { stopJobs } from '../../src/lib/server/jobs';

type Json = Record<string, any>;
let home: Awaited<ReturnType<typeof makeLab>>;
const token: Record<string, string> = {};
let outsider: string;
let lab: string;
let schemeId: string;
const STEP_NM = 8;

/** The triangle with a working stroke of 8 nm on step a, so that its cycle flux shows as a velocity. */
function stroke(kForwardA = 100, kBackwardC = 2) {
	const doc = triangleScheme('Triangle with a stroke', kBackwardC);
	doc.steps[0] = { ...doc.steps[0], kForward: kForwardA, displacementNm: STEP_NM } as (typeof doc.steps)[number];
	return doc;
}

/**
 * Net flux of a three-state cycle 1 →a 2 →b 3 →c 1 at steady state, by the diagram method written out for three
 * states: J = (a⁺b⁺c⁺ − a⁻b⁻c⁻) / Σ, with Σ the sum of the nine directed spanning-tree weights.
 */
function triangleFlux(doc: ReturnType<typeof stroke>): number {
	const [a, b, c] = doc.steps;
	const [p1, m1, p2, m2, p3, m3] = [a.kForward, a.kBackward, b.kForward, b.kBackward, c.kForward, c.kBackward];
	const sigma = p2 * p3 + m1 * p3 + m1 * m2 + p3 * p1 + m2 * p1 + m2 * m3 + p1 * p2 + m3 * p2 + m3 * m1;
	return (p1 * p2 * p3 - m1 * m2 * m3) / sigma;
}

async function preview(json: unknown, as = token.reader, scheme = schemeId, labSlug = lab): Promise<Response> {
	return api('POST', `/api/v1/labs/${labSlug}/schemes/${scheme}/preview`, { token: as, json });
}

async function storedCounts() {
	const [revisions] = await db.select({ n: count() }).from(schema.schemeRevisions).where(eq(schema.schemeRevisions.schemeId, schemeId));
	const [audits] = await db.select({ n: count() }).from(schema.audits).where(eq(schema.audits.schemeId, schemeId));
	return { revisions: revisions.n, audits: audits.n };
}

beforeAll(async () => {
	home = await makeLab(['lead', 'modeller', 'reviewer', 'reader']);
	const other = await makeLab(['lead']);
	lab = home.lab.slug;
	for (const role of ['lead', 'modeller', 'reviewer', 'reader']) token[role] = await tokenFor(home.people[role].id);
	outsider = await tokenFor(other.people.lead.id);
	const res = await api('POST', `/api/v1/labs/${lab}/schemes`, { token: token.modeller, json: { name: 'Stroke triangle', scheme: stroke() } });
	expect(res.status).toBe(201);
	schemeId = (await body<Json>(res)).scheme.id;
});

afterAll(async () => {
	await stopJobs();
});

describe('preview of an edited scheme', () => {
	it('answers the audit of the edit, not of the saved revision; a faster forward step on the cycle moves the motor faster', async () => {
		const before = await storedCounts();
		const savedRes = await preview({ revision: 1 });
		expect(savedRes.status).toBe(200);
		const saved = await body<Json>(savedRes);

		const edited = stroke(400);
		const editedRes = await preview({ scheme: edited });
		expect(editedRes.status).toBe(200);
		const draft = await body<Json>(editedRes);

		expect(draft.format).toBe('escapement.audit/1');
		expect(draft.steps.find((s: Json) => s.id === 'a').forwardRate).toBe(400);
		expect(saved.steps.find((s: Json) => s.id === 'a').forwardRate).toBe(100);
		// Both agree with the closed-form flux of the cycle they describe …
		expect(saved.observables.velocityNmPerS).toBeCloseTo(STEP_NM * triangleFlux(stroke()), 6);
		expect(draft.observables.velocityNmPerS).toBeCloseTo(STEP_NM * triangleFlux(edited), 6);
		// … and the edit speeds the motor up.
		expect(draft.observables.velocityNmPerS).toBeGreaterThan(saved.observables.velocityNmPerS * 1.05);
		// Nothing was stored.
		expect(await storedCounts()).toEqual(before);
	});

	it('applies the conditions on top of the edited document', async () => {
		const res = await preview({ scheme: stroke(400), conditions: { temperatureK: 310, forcePN: 2 } });
		expect(res.status).toBe(200);
		const audit = await body<Json>(res);
		expect(audit.conditions.temperatureK).toBe(310);
		expect(audit.conditions.forcePN).toBe(2);
	});

	it('follows the edit into the verdicts: balancing the cycle turns its violation consistent', async () => {
		// a⁺b⁺c⁺ / a⁻b⁻c⁻ = 100·50·20 / (10·5·kc⁻): 1000 with the saved kc⁻ = 2, exactly 1 with kc⁻ = 2000.
		const saved = await body<Json>(await preview({}));
		expect(saved.verdictCounts.violation).toBe(1);
		const balanced = await body<Json>(await preview({ scheme: stroke(100, 2000) }));
		expect(balanced.verdictCounts.violation).toBe(0);
		expect(balanced.verdictCounts.consistent).toBe(1);
		expect(Math.abs(balanced.observables.velocityNmPerS)).toBeLessThan(1e-9);
	});

	it('refuses an invalid document with 422 and the JSON path of each problem, storing nothing', async () => {
		const before = await storedCounts();
		const bad = stroke() as Json;
		bad.steps[1] = { ...bad.steps[1], kForward: -5 };
		bad.steps[2] = { ...bad.steps[2], to: 'E9' };
		const res = await preview({ scheme: bad });
		expect(res.status).toBe(422);
		const payload = await body<Json>(res);
		expect(payload.error.code).toBe('invalid_scheme');
		const paths = (payload.error.details as { path: string; message: string }[]).map((d) => d.path);
		expect(paths).toContain('steps[1].kForward');
		expect(paths.some((p) => p.startsWith('steps[2].to'))).toBe(true);
		expect(await storedCounts()).toEqual(before);
	});

	it('refuses a body that names both a scheme and a revision (400, at "scheme")', async () => {
		const res = await preview({ scheme: stroke(400), revision: 1 });
		expect(res.status).toBe(400);
		const payload = await body<Json>(res);
		expect(payload.error.code).toBe('invalid');
		expect(payload.error.details.map((d: Json) => d.path)).toContain('scheme');
	});

	it('refuses a scheme over the step limit before auditing it, naming the limit (422)', async () => {
		const big = stroke() as Json;
		big.steps = Array.from({ length: 5001 }, (_, i) => ({ id: `s${i}`, from: 'E1', to: 'E2', kForward: 1, kBackward: 1 }));
		const res = await preview({ scheme: big });
		expect(res.status).toBe(422);
		const details = (await body<Json>(res)).error.details;
		expect(details).toEqual([expect.objectContaining({ path: 'steps', limit: 'steps', message: expect.stringMatching(/5001 steps; the limit is 5000/) })]);
	});

	it('lets every member preview an edit, a reader included (nothing is stored)', async () => {
		for (const role of ['lead', 'modeller', 'reviewer', 'reader']) expect((await preview({ scheme: stroke(400) }, token[role])).status, role).toBe(200);
	});

	it('answers 404 to another lab, to a scheme of another lab, and 401 without a token', async () => {
		expect((await preview({ scheme: stroke(400) }, outsider)).status).toBe(404);
		const theirs = await makeLab(['modeller']);
		const theirToken = await tokenFor(theirs.people.modeller.id);
		const created = await api('POST', `/api/v1/labs/${theirs.lab.slug}/schemes`, { token: theirToken, json: { name: 'Theirs', scheme: stroke() } });
		const theirScheme = (await body<Json>(created)).scheme.id;
		// Our reader, their scheme id under our lab's URL: not found, even with a valid document.
		expect((await preview({ scheme: stroke(400) }, token.reader, theirScheme)).status).toBe(404);
		expect((await preview({ scheme: stroke(400) }, null as unknown as string)).status).toBe(401);
	});
});
