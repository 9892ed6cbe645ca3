/**
 * The size limits of a scheme (SCHEME_LIMITS: states and steps) hold everywhere a scheme comes in: creating through
 * the JSON API, saving a revision and previewing answer 422 with the limit named at its JSON path, and nothing is
 * stored; a scheme right at the limit (a 5,000-step ring) is taken.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { count, eq } from 'drizzle-orm';
import { db, schema, makeLab } from './db';
import { api, body, tokenFor } from './request';
import { triangleScheme } from './api-fixtures';
import { stopJobs } from '../../src/lib/server/jobs';
import { parseScheme, SCHEME_LIMITS } from '../../src/lib/engine/scheme';

type Json = Record<string, any>;
let home: Awaited<ReturnType<typeof makeLab>>;
let token: string;

/** A ring of n states and n steps [der: the smallest connected scheme with one cycle]. */
function ring(n: number, steps = n) {
	const states = Array.from({ length: n }, (_, i) => ({ id: `S${i}` }));
	return {
		format: 'escapement.scheme/1',
		name: `Kestrel ring ${n}/${steps}`,
		states,
		steps: Array.from({ length: steps }, (_, i) => ({ id: `k${i}`, from: `S${i % n}`, to: `S${(i + 1) % n}`, kForward: 2, kBackward: 1 }))
	};
}

async function schemeCount() {
	const [row] = await db.select({ n: count() }).from(schema.schemes).where(eq(schema.schemes.labId, home.lab.id));
	return row.n;
}

beforeAll(async () => {
	home = await makeLab(['modeller']);
	token = await tokenFor(home.people.modeller.id);
});
afterAll(async () => {
	await stopJobs();
});

describe('scheme limits', () => {
	it('are 5,000 states and 5,000 steps, the rate-table import’s step limit [trade]', () => {
		expect(SCHEME_LIMITS).toEqual({ states: 5000, steps: 5000 });
		const over = parseScheme(ring(SCHEME_LIMITS.states + 1));
		expect(over.ok).toBe(false);
		if (!over.ok) expect(over.errors.map((e) => e.limit).sort()).toEqual(['states', 'steps']);
	});

	it('refuse a scheme past the step limit with 422 naming the limit; nothing is saved', async () => {
		const before = await schemeCount();
		const res = await api('POST', `/api/v1/labs/${home.lab.slug}/schemes`, { token, json: { scheme: ring(10, SCHEME_LIMITS.steps + 1) } });
		expect(res.status).toBe(422);
		const payload = await body<Json>(res);
		expect(payload.error.code).toBe('invalid_scheme');
		expect(payload.error.details).toEqual([{ path: 'steps', limit: 'steps', message: expect.stringMatching(/5001 steps; the limit is 5000 steps/) }]);
		expect(await schemeCount()).toBe(before);
	});

	it('take a 5,000-step ring, and refuse a revision of it past the state limit (422)', async () => {
		const created = await api('POST', `/api/v1/labs/${home.lab.slug}/schemes`, { token, json: { scheme: ring(SCHEME_LIMITS.steps) } });
		expect(created.status).toBe(201);
		const { scheme } = await body<Json>(created);
		const res = await api('POST', `/api/v1/labs/${home.lab.slug}/schemes/${scheme.id}/revisions`, {
			token,
			json: { scheme: ring(SCHEME_LIMITS.states + 1, 1), note: 'too many states' }
		});
		expect(res.status).toBe(422);
		const details = (await body<Json>(res)).error.details as Json[];
		expect(details.find((d) => d.limit === 'states')?.message).toMatch(/5001 states; the limit is 5000 states/);
		const [revisions] = await db.select({ n: count() }).from(schema.schemeRevisions).where(eq(schema.schemeRevisions.schemeId, scheme.id));
		expect(revisions.n).toBe(1);
	});

	it('refuse a preview past the limit before the engine sees it (422)', async () => {
		const created = await api('POST', `/api/v1/labs/${home.lab.slug}/schemes`, { token, json: { scheme: triangleScheme('Kestrel triangle (limits)') } });
		const { scheme } = await body<Json>(created);
		const res = await api('POST', `/api/v1/labs/${home.lab.slug}/schemes/${scheme.id}/preview`, { token, json: { scheme: ring(3, SCHEME_LIMITS.steps + 1) } });
		expect(res.status).toBe(422);
		expect((await body<Json>(res)).error.details[0]).toMatchObject({ path: 'steps', limit: 'steps' });
	});
});
