/**
 * The cycles route and the audit page's data for an audit with thousands of cycles: the complete graph K8 with one
 * step's forward rate ten times too large. Counting by hand: K8 has Σ_k C(8,k)(k−1)!/2 = 56 + 210 + 672 + 1680 + 2880 +
 * 2520 = 8018 simple cycles with Σ k·count_k = 54,768 step incidences, 54,768 / 28 = 1956 through each step; so 1956
 * cycles violate thermodynamic consistency and 6062 do not. Real PostgreSQL, real handlers through hooks.server.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeLab } from './db';
import { api, body, tokenFor } from './request';
import { triangleScheme } from './api-fixtures';
import { requireLab, type SignedInUser } from '../../src/lib/server/access';
import { createScheme } from '../../src/lib/server/schemes';
import { getAudit, getAuditSummary, runAudit } from '../../src/lib/server/audits';
import { completeScheme } from '../../src/lib/engine/random-scheme';
import { load } from '../../src/routes/(app)/labs/[lab]/audits/[audit]/+page.server';
import { stopJobs } from '../../src/lib/server/jobs';

type Json = Record<string, any>;
let home: Awaited<ReturnType<typeof makeLab>>;
let reader: string;
let outsider: string;
let big: string;
let small: string;
const K8_CYCLES = 8018;
const K8_VIOLATIONS = 1956;

const cyclesOf = (audit: string, query: string) => `/api/v1/labs/${home.lab.slug}/audits/${audit}/cycles?${query}`;

async function page(query: string, token = reader, audit = big): Promise<Json> {
	const res = await api('GET', cyclesOf(audit, query), { token });
	const payload = await body<Json>(res);
	if (res.status !== 200) throw new Error(`cycles ${query}: ${res.status} ${JSON.stringify(payload)}`);
	return payload;
}

/** All pages of a query, in order. */
async function allPages(query: string, pageSize: number): Promise<Json[]> {
	const first = await page(`${query}&page=1&pageSize=${pageSize}`);
	const pages = [first];
	for (let p = 2; p <= first.pages; p++) pages.push(await page(`${query}&page=${p}&pageSize=${pageSize}`));
	return pages;
}

beforeAll(async () => {
	home = await makeLab(['lead', 'modeller', 'reader']);
	const other = await makeLab(['lead']);
	reader = await tokenFor(home.people.reader.id);
	outsider = await tokenFor(other.people.lead.id);
	const access = await requireLab(home.people.modeller as SignedInUser, home.lab.slug, 'model');
	const k8 = completeScheme(8);
	k8.steps[0].kForward = 10;
	// stated uncertainties on half the steps, so |deviation|/σ differs from cycle to cycle
	k8.steps.forEach((s, i) => (s.relUncertaintyForward = i % 2 ? 0.3 : null));
	const bigScheme = await createScheme(access, { name: 'K8 one step out of balance', scheme: k8 });
	big = (await runAudit(access, bigScheme.scheme.id)).id;
	const smallScheme = await createScheme(access, { name: 'Triangle', scheme: triangleScheme('Triangle') });
	small = (await runAudit(access, smallScheme.scheme.id)).id;
}, 120_000);

afterAll(async () => {
	await stopJobs();
});

describe('GET /api/v1/labs/[lab]/audits/[audit]/cycles', () => {
	it('counts every listed cycle, as combinatorics and the stored verdict counts say', async () => {
		const first = await page('');
		const stored = await getAudit(home.lab.id, big);
		expect(stored.results.cyclesComplete).toBe(true);
		expect(stored.results.cycleCount).toBe(K8_CYCLES);
		expect(first.total).toBe(K8_CYCLES);
		expect(first.counts).toEqual({ violation: K8_VIOLATIONS, irreversible: 0, unbalanced: 0, consistent: K8_CYCLES - K8_VIOLATIONS });
		expect(first.counts).toEqual(stored.verdictCounts);
		expect(first).toMatchObject({ page: 1, pageSize: 50, pages: Math.ceil(K8_CYCLES / 50), verdict: 'all', sort: 'z', dir: 'desc' });
		expect(Object.keys(first.rows[0]).sort()).toEqual(['affinityKT', 'cycle', 'index', 'zScore']);
	});

	it('answers disjoint pages that cover every cycle once, in order of net flux', async () => {
		const pages = await allPages('sort=netFlux&dir=asc', 200);
		expect(pages.length).toBe(Math.ceil(K8_CYCLES / 200));
		const rows = pages.flatMap((p) => p.rows);
		expect(rows.length).toBe(K8_CYCLES);
		expect(new Set(rows.map((r) => r.index)).size).toBe(K8_CYCLES);
		expect(Math.min(...rows.map((r) => r.index))).toBe(0);
		expect(Math.max(...rows.map((r) => r.index))).toBe(K8_CYCLES - 1);
		const stored = await getAudit(home.lab.id, big);
		for (let i = 0; i < rows.length; i++) {
			expect(rows[i].cycle).toEqual(stored.results.cycles[rows[i].index]);
			if (i > 0) expect(rows[i].cycle.netFlux).toBeGreaterThanOrEqual(rows[i - 1].cycle.netFlux);
		}
	});

	it('filters by verdict: the violations are exactly the cycles through the unbalanced step', async () => {
		const pages = await allPages('verdict=violation', 200);
		const rows = pages.flatMap((p) => p.rows);
		expect(pages[0].total).toBe(K8_VIOLATIONS);
		expect(rows.length).toBe(K8_VIOLATIONS);
		expect(rows.every((r) => r.cycle.verdict === 'violation' && r.cycle.steps.some((s: Json) => s.id === 's0'))).toBe(true);
		expect(pages[0].counts.violation).toBe(K8_VIOLATIONS);
		const consistent = await page('verdict=consistent&pageSize=1');
		expect(consistent.total).toBe(K8_CYCLES - K8_VIOLATIONS);
	});

	it('sorts by |deviation|/σ, largest first, each computed from the cycle itself', async () => {
		const { rows } = await page('verdict=violation&sort=z&dir=desc&pageSize=200');
		for (let i = 0; i < rows.length; i++) {
			expect(rows[i].zScore).toBeCloseTo(Math.abs(rows[i].cycle.deviationLog10) / rows[i].cycle.sigmaLog10, 12);
			if (i > 0) expect(rows[i].zScore).toBeLessThanOrEqual(rows[i - 1].zScore);
		}
		// ten times too fast a forward rate: every violating cycle is off by one in log10, one way or the other
		expect(rows.every((r: Json) => Math.abs(Math.abs(r.cycle.deviationLog10) - 1) < 1e-9)).toBe(true);
		const byLength = (await page('sort=length&pageSize=5')).rows;
		expect(byLength.map((r: Json) => r.cycle.steps.length)).toEqual([3, 3, 3, 3, 3]);
		expect((await page('sort=length&dir=desc&pageSize=5')).rows.map((r: Json) => r.cycle.steps.length)).toEqual([8, 8, 8, 8, 8]);
	});

	it('turns to the page that holds a chosen cycle', async () => {
		const answer = await page('sort=netFlux&dir=desc&pageSize=100&cycle=5000');
		expect(answer.rows.map((r: Json) => r.index)).toContain(5000);
		const again = await page(`sort=netFlux&dir=desc&pageSize=100&page=${answer.page}`);
		expect(again.rows).toEqual(answer.rows);
	});

	it('refuses a bad query with the parameter and what to give', async () => {
		for (const [query, path] of [
			['pageSize=201', 'pageSize'],
			['sort=speed', 'sort'],
			['verdict=bad', 'verdict'],
			['page=0', 'page'],
			['dir=up', 'dir'],
			['pagesize=10', 'query'],
			[`cycle=${K8_CYCLES}`, 'cycle']
		]) {
			const res = await api('GET', cyclesOf(big, query), { token: reader });
			const payload = await body<Json>(res);
			expect(res.status, query).toBe(400);
			expect(payload.error.code).toBe('invalid');
			expect(payload.error.details[0].path, query).toBe(path);
		}
		const hidden = await page('verdict=violation&pageSize=1');
		const consistentIndex = (await page('verdict=consistent&pageSize=1')).rows[0].index;
		expect(hidden.total).toBe(K8_VIOLATIONS);
		const res = await api('GET', cyclesOf(big, `verdict=violation&cycle=${consistentIndex}`), { token: reader });
		expect(res.status).toBe(400);
		expect((await body<Json>(res)).error.message).toContain('verdict=consistent');
	});

	it('answers a reader of the lab, and 404 to another lab and 401 without a token', async () => {
		expect((await api('GET', cyclesOf(big, 'pageSize=1'), { token: reader })).status).toBe(200);
		const foreign = await api('GET', cyclesOf(big, 'pageSize=1'), { token: outsider });
		expect(foreign.status).toBe(404);
		expect((await body<Json>(foreign)).error.code).toBe('not_found');
		expect((await api('GET', cyclesOf(big, 'pageSize=1'))).status).toBe(401);
		expect((await api('GET', cyclesOf('00000000-0000-4000-8000-000000000000', 'pageSize=1'), { token: reader })).status).toBe(404);
	});
});

describe('the audit page data', () => {
	const pageData = async (audit: string, search = '') =>
		(await load({
			locals: { user: home.people.reader },
			params: { lab: home.lab.slug, audit },
			url: new URL(`http://127.0.0.1/labs/${home.lab.slug}/audits/${audit}${search}`),
			request: new Request(`http://127.0.0.1/labs/${home.lab.slug}/audits/${audit}${search}`),
			isDataRequest: false,
			setHeaders: () => {}
		} as never)) as Json;

	it('reads the audit without its per-cycle lists and nothing else missing', async () => {
		const full = await getAudit(home.lab.id, big);
		const summary = await getAuditSummary(home.lab.id, big);
		const { cycles, cycleAffinitiesKT, ...rest } = full.results;
		expect(cycles.length).toBe(K8_CYCLES);
		expect(cycleAffinitiesKT.length).toBe(K8_CYCLES);
		expect(summary.results).toEqual(rest);
		expect(summary.sha256).toBe(full.sha256);
	});

	it('sends one page of a large audit, its worst cycle and the violating cycles the diagram needs, not every cycle', async () => {
		const data = await pageData(big, '?cycle=4001');
		const size = JSON.stringify(data).length;
		const full = await getAudit(home.lab.id, big);
		expect(size).toBeLessThan(JSON.stringify(full.results).length / 20);
		expect(data.audit.results.cycles).toBeUndefined();
		expect(data.audit.results.cycleAffinitiesKT).toBeUndefined();
		expect(data.cycles.inline).toBeNull();
		expect(data.cycles.first.rows.length).toBe(50);
		expect(data.cycles.first.total).toBe(K8_CYCLES);
		expect(data.cycles.highlighted.index).toBe(4000);
		expect(data.cycles.first.rows.map((r: Json) => r.index)).toContain(4000);
		expect(data.cycles.worst.cycle.verdict).toBe('violation');
		const steps = new Set(data.cycles.violationCover.flatMap((c: Json) => c.steps.map((s: Json) => s.id)));
		// every step of K8 lies on some cycle through s0
		expect(steps.size).toBe(28);
		expect(data.cycles.violationCover.length).toBeLessThanOrEqual(28);
	});

	it('sends every cycle of a small audit', async () => {
		const data = await pageData(small);
		expect(data.cycles.inline.length).toBe(1);
		expect(data.cycles.first).toBeNull();
		expect((await page('', reader, small)).rows).toEqual(data.cycles.inline);
	});
});
