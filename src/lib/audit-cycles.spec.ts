import { describe, expect, it } from 'vitest';
import { auditScheme, PACER_STEPPER_MISFIT, type AuditCycle, type Verdict } from '$lib/engine';
import { completeScheme } from '$lib/engine/random-scheme';
import {
	cyclePage,
	cycleRows,
	cycleVerdictCounts,
	sortAndFilterCycles,
	violationCover,
	worstCycle,
	zScore,
	CYCLE_SORTS
} from './audit-cycles';

function cycle(over: Partial<AuditCycle> & { verdict: Verdict }): AuditCycle {
	return {
		states: ['A', 'B', 'C'],
		steps: [
			{ id: 'a', direction: 1 },
			{ id: 'b', direction: 1 },
			{ id: 'c', direction: -1 }
		],
		log10RateRatio: 0,
		expectedLog10: 0,
		deviationLog10: 0,
		sigmaLog10: 0.5,
		forwardFlux: 1,
		backwardFlux: 1,
		netFlux: 0,
		netReaction: {},
		displacementNm: 0,
		...over
	};
}

const CYCLES = [
	cycle({ verdict: 'consistent', deviationLog10: 0.1, sigmaLog10: 0.5, netFlux: 3 }),
	cycle({ verdict: 'violation', deviationLog10: -1.6, sigmaLog10: 0.45, netFlux: 2 }),
	cycle({
		verdict: 'irreversible',
		deviationLog10: null,
		log10RateRatio: null,
		netFlux: 50,
		states: ['A', 'B', 'C', 'D'],
		steps: ['a', 'b', 'c', 'd'].map((id) => ({ id, direction: 1 as const }))
	}),
	cycle({ verdict: 'violation', deviationLog10: 0.9, sigmaLog10: 0.1, netFlux: -1 })
];

describe('zScore', () => {
	it('is |deviation|/σ and missing without an uncertainty', () => {
		expect(zScore({ deviationLog10: -1.6, sigmaLog10: 0.4 })).toBeCloseTo(4, 12);
		expect(zScore({ deviationLog10: 0.3, sigmaLog10: 0 })).toBeNull();
		expect(zScore({ deviationLog10: null, sigmaLog10: 0.4 })).toBeNull();
	});
});

describe('sorting and filtering the cycles table', () => {
	const rows = cycleRows(CYCLES, [0, 1, null, 2]);
	it('sorts by |deviation|/σ, largest first, with missing values last', () => {
		expect(sortAndFilterCycles(rows, 'z', true, 'all').map((r) => r.index)).toEqual([3, 1, 0, 2]);
		expect(sortAndFilterCycles(rows, 'z', false, 'all').map((r) => r.index)).toEqual([0, 1, 3, 2]);
	});
	it('sorts by signed deviation, net flux and length', () => {
		expect(sortAndFilterCycles(rows, 'deviation', false, 'all').map((r) => r.index)).toEqual([1, 0, 3, 2]);
		expect(sortAndFilterCycles(rows, 'netFlux', true, 'all').map((r) => r.index)).toEqual([2, 0, 1, 3]);
		expect(sortAndFilterCycles(rows, 'length', true, 'all')[0].index).toBe(2);
	});
	it('filters by verdict without losing the engine index', () => {
		const violations = sortAndFilterCycles(rows, 'z', true, 'violation');
		expect(violations.map((r) => r.index)).toEqual([3, 1]);
		expect(violations.every((r) => r.cycle.verdict === 'violation')).toBe(true);
		expect(sortAndFilterCycles(rows, 'z', true, 'unbalanced')).toEqual([]);
	});
});

describe('worst cycle', () => {
	it('picks the largest deviation against its own σ, not the largest deviation', () => {
		// −1.6 is larger than 0.9, but 0.9/0.1 = 9σ beats 1.6/0.45 ≈ 3.6σ
		expect(worstCycle(cycleRows(CYCLES, []))?.index).toBe(3);
	});
	it('falls back to the largest |deviation| when no rate has an uncertainty', () => {
		const noSigma = CYCLES.map((c) => ({ ...c, sigmaLog10: null }));
		const worst = worstCycle(cycleRows(noSigma, []));
		expect(worst?.index).toBe(1);
		expect(worst?.zScore).toBeNull();
	});
	it('finds the mistyped Pi-release cycle of the misfit Pacer scheme as the worst [der]', () => {
		// the misfit scheme has one cycle, with k− of Pi release ten times too large: deviation −1 in log10
		const audit = auditScheme(PACER_STEPPER_MISFIT);
		const worst = worstCycle(cycleRows(audit.cycles, audit.cycleAffinitiesKT));
		expect(worst?.cycle.verdict).toBe('violation');
		expect(worst?.cycle.deviationLog10).toBeCloseTo(-1, 9);
	});
});

/**
 * K5 with every rate 1 is at equilibrium; multiplying one step's forward rate by 10 breaks exactly the cycles through
 * that step. Counting by hand: K5 has C(5,3)·1 + C(5,4)·3 + C(5,5)·12 = 10 + 15 + 12 = 37 simple cycles with
 * 3·10 + 4·15 + 5·12 = 150 step incidences, 150 / 10 = 15 through each step; so 15 violate and 22 are consistent.
 */
function brokenK5() {
	const scheme = completeScheme(5);
	scheme.steps[0].kForward = 10;
	return auditScheme(scheme);
}

describe('pages of the cycles table', () => {
	const audit = brokenK5();
	const rows = cycleRows(audit.cycles, audit.cycleAffinitiesKT);

	it('counts the cycles of K5 with one step out of balance as combinatorics says', () => {
		expect(rows.length).toBe(37);
		expect(cycleVerdictCounts(rows)).toEqual({ violation: 15, irreversible: 0, unbalanced: 0, consistent: 22 });
	});

	it('cuts the sorted list into disjoint pages that cover every cycle, for every sort and direction', () => {
		for (const sort of CYCLE_SORTS)
			for (const descending of [true, false]) {
				const first = cyclePage(rows, { verdict: 'all', sort, descending, page: 1, pageSize: 8 });
				expect(first.total).toBe(37);
				expect(first.pages).toBe(5);
				const seen: number[] = [];
				for (let page = 1; page <= first.pages; page++) {
					const p = cyclePage(rows, { verdict: 'all', sort, descending, page, pageSize: 8 });
					expect(p.rows.length).toBe(page < 5 ? 8 : 5);
					seen.push(...p.rows.map((r) => r.index));
				}
				expect(new Set(seen).size).toBe(37);
				expect(seen).toEqual(sortAndFilterCycles(rows, sort, descending, 'all').map((r) => r.index));
			}
	});

	it('orders the pages by the key: steps, largest first, then the engine order', () => {
		const all = [1, 2, 3, 4, 5].flatMap((page) => cyclePage(rows, { verdict: 'all', sort: 'length', descending: true, page, pageSize: 8 }).rows);
		for (let i = 1; i < all.length; i++) {
			const [a, b] = [all[i - 1], all[i]];
			expect(a.cycle.steps.length > b.cycle.steps.length || (a.cycle.steps.length === b.cycle.steps.length && a.index < b.index)).toBe(true);
		}
		expect(all[0].cycle.steps.length).toBe(5);
		expect(all.at(-1)!.cycle.steps.length).toBe(3);
	});

	it('filters by verdict, keeps the counts of all listed cycles and answers an empty page past the end', () => {
		const violations = cyclePage(rows, { verdict: 'violation', sort: 'z', descending: true, page: 2, pageSize: 10 });
		expect(violations.total).toBe(15);
		expect(violations.rows.length).toBe(5);
		expect(violations.rows.every((r) => r.cycle.verdict === 'violation' && r.cycle.steps.some((s) => s.id === 's0'))).toBe(true);
		expect(violations.counts).toEqual(cycleVerdictCounts(rows));
		const past = cyclePage(rows, { verdict: 'violation', sort: 'z', descending: true, page: 3, pageSize: 10 });
		expect(past).toMatchObject({ total: 15, page: 3, pages: 2, rows: [] });
	});

	it('turns to the page that holds a chosen cycle, unless the filter hides it', () => {
		const order = sortAndFilterCycles(rows, 'netFlux', false, 'all').map((r) => r.index);
		const chosen = order[29];
		const p = cyclePage(rows, { verdict: 'all', sort: 'netFlux', descending: false, page: 1, pageSize: 10, cycle: chosen });
		expect(p.page).toBe(3);
		expect(p.rows.map((r) => r.index)).toContain(chosen);
		const consistent = rows.find((r) => r.cycle.verdict === 'consistent')!.index;
		expect(cyclePage(rows, { verdict: 'violation', sort: 'z', descending: true, page: 2, pageSize: 10, cycle: consistent }).page).toBe(2);
	});
});

describe('what the audit page sends instead of every cycle', () => {
	const audit = brokenK5();
	it('covers every step of every violating cycle with few of them', () => {
		const cover = violationCover(audit.cycles);
		const onViolations = new Set(audit.cycles.filter((c) => c.verdict === 'violation').flatMap((c) => c.steps.map((s) => s.id)));
		expect(new Set(cover.flatMap((c) => c.steps.map((s) => s.id)))).toEqual(onViolations);
		expect(cover.every((c) => c.verdict === 'violation')).toBe(true);
		expect(cover.length).toBeLessThanOrEqual(onViolations.size);
		expect(cover.length).toBeLessThan(15);
		expect(violationCover(auditScheme(completeScheme(5)).cycles)).toEqual([]);
	});
});
