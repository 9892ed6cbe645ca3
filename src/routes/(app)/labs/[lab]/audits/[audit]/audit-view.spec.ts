import { describe, expect, it } from 'vitest';
import { auditScheme, PACER_STEPPER_MISFIT, type AuditCycle, type Verdict } from '$lib/engine';
import { cyclePath, cycleRows, netReactionText, pageOf, sortAndFilterCycles, worstCycle, zScore } from './audit-view';

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
	it('pages long lists and clamps the page', () => {
		const many = Array.from({ length: 766 }, (_, i) => i);
		const last = pageOf(many, 99, 50);
		expect(last.pages).toBe(16);
		expect(last.page).toBe(16);
		expect(last.from).toBe(751);
		expect(last.to).toBe(766);
		expect(pageOf(many, 2, 50).rows[0]).toBe(50);
		expect(pageOf([], 1, 50)).toMatchObject({ pages: 1, from: 0, to: 0 });
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

describe('how a cycle reads', () => {
	it('closes the path of states', () => {
		expect(cyclePath(['E', 'T', 'DP', 'D'])).toBe('E → T → DP → D → E');
	});
	it('names the net reaction, its multiple and its direction', () => {
		expect(netReactionText({ 'ATP hydrolysis': 1 })).toBe('ATP hydrolysis');
		expect(netReactionText({ 'ATP hydrolysis': 2, 'Pi exchange': -1 })).toBe('2 × ATP hydrolysis, Pi exchange (reverse)');
		expect(netReactionText({})).toBe('none');
		expect(netReactionText(null)).toBe('—');
	});
});
