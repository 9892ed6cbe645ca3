import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { cycleBasis, enumerateCycles, type Cycle, type CycleGraph } from './cycles';
import { effectiveRates } from './rates';
import { completeScheme, randomScheme } from './random-scheme';

const counting = JSON.parse(readFileSync(new URL('../../../reference/counting.json', import.meta.url), 'utf8'));

const graphOf = (n: number, steps: [number, number][]): CycleGraph => ({
	n,
	m: steps.length,
	from: steps.map((s) => s[0]),
	to: steps.map((s) => s[1])
});

function expectWellFormed(g: CycleGraph, cycle: Cycle) {
	const k = cycle.states.length;
	expect(cycle.steps).toHaveLength(k);
	expect(new Set(cycle.states).size).toBe(k);
	expect(new Set(cycle.steps.map((s) => s.step)).size).toBe(k);
	cycle.steps.forEach(({ step, direction }, i) => {
		const a = cycle.states[i];
		const b = cycle.states[(i + 1) % k];
		expect(direction === 1 ? [g.from[step], g.to[step]] : [g.to[step], g.from[step]]).toEqual([a, b]);
	});
}

describe('cycle enumeration', () => {
	it.each(counting.simpleCyclesOfCompleteGraphs.values as { n: number; cycles: number }[])(
		'K$n has $cycles simple cycles — OEIS A002807 [pub]',
		({ n, cycles }) => {
			const t = effectiveRates(completeScheme(n));
			const found = enumerateCycles(t);
			expect(found.complete).toBe(true);
			expect(found.cycles).toHaveLength(cycles);
			const keys = new Set(found.cycles.map((c) => c.steps.map((s) => s.step).sort((a, b) => a - b).join(',')));
			expect(keys.size).toBe(cycles);
			for (const c of found.cycles) expectWellFormed(t, c);
		}
	);

	it('makes a two-state cycle from two parallel steps, and three from three', () => {
		const g = graphOf(2, [
			[0, 1],
			[1, 0],
			[0, 1]
		]);
		const found = enumerateCycles(g);
		expect(found.cycles).toHaveLength(3); // C(3,2) pairs of parallel steps [counting]
		for (const c of found.cycles) expectWellFormed(g, c);
	});

	it('orients each cycle so that at least half of its steps run forward', () => {
		const g = graphOf(3, [
			[1, 0],
			[2, 1],
			[0, 2]
		]);
		const [c] = enumerateCycles(g).cycles;
		expect(c.steps.filter((s) => s.direction === 1).length).toBeGreaterThanOrEqual(2);
		expectWellFormed(g, c);
	});

	it('stops at the cap and says the list is incomplete', () => {
		const t = effectiveRates(completeScheme(7));
		const found = enumerateCycles(t, { maxCycles: 100 });
		expect(found.complete).toBe(false);
		expect(found.cycles).toHaveLength(100);
	});
});

describe('cycle basis', () => {
	it.each([1, 2, 3, 4, 5, 6])('has steps − states + 1 well-formed, independent cycles (seed %i) — Kirchhoff [pub]', (seed) => {
		const t = effectiveRates(randomScheme({ states: 9, steps: 17, seed }));
		const basis = cycleBasis(t);
		expect(basis).toHaveLength(17 - 9 + 1);
		for (const c of basis) expectWellFormed(t, c);
		// independence: each basis cycle uses a step that no earlier one uses, so the incidence matrix is triangular
		const used = new Set<number>();
		for (const c of basis) {
			expect(c.steps.some((s) => !used.has(s.step))).toBe(true);
			c.steps.forEach((s) => used.add(s.step));
		}
	});
});
