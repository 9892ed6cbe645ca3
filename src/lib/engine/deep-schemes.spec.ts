/**
 * Regression: a 5,000-state ring overflowed the call stack in the recursive cycle search. Every traversal of the
 * engine and the diagram layout must be iterative, so these long schemes finish with the right counts.
 */
import { describe, expect, it } from 'vitest';
import { ringOrder } from '../components/diagram-layout';
import { auditScheme } from './audit';
import { cycleBasis, enumerateCycles } from './cycles';
import { plainScheme, plainStep } from './random-scheme';
import { effectiveRates } from './rates';
import { enumerateForests } from './trees';

const N = 5000;
const ids = Array.from({ length: N }, (_, i) => `S${i}`);
const ring = plainScheme(
	'Kestrel long ring',
	ids,
	ids.map((id, i) => plainStep(`k${i}`, id, ids[(i + 1) % N], 2, 1))
);

describe('5,000-state ring (stack overflow regression)', () => {
	it('has exactly one simple cycle through every state and step — a ring has m − n + 1 = 1 cycle [der]', () => {
		const t = effectiveRates(ring);
		const found = enumerateCycles(t);
		expect(found.complete).toBe(true);
		expect(found.cycles).toHaveLength(1);
		const [cycle] = found.cycles;
		expect(new Set(cycle.states).size).toBe(N);
		expect(new Set(cycle.steps.map((s) => s.step)).size).toBe(N);
		expect(cycle.steps.every((s) => s.direction === 1)).toBe(true);
		expect(cycleBasis(t)).toHaveLength(1);
	});

	it('audits: uniform steady state 1/n and net flux (k+ − k−)/n on a uniform ring, by symmetry [der]', () => {
		const audit = auditScheme(ring, { correction: false });
		expect(audit.cycleCount).toBe(1);
		for (const s of [audit.states[0], audit.states[N / 2], audit.states[N - 1]]) expect(s.probability).toBeCloseTo(1 / N, 12);
		expect(audit.steps[123].netFlux).toBeCloseTo((2 - 1) / N, 12);
	});

	it('diagram ring order keeps the ring order of all 5,000 states [der]', () => {
		const order = ringOrder({ states: ring.states, steps: ring.steps });
		expect(order).toHaveLength(N);
		expect(new Set(order).size).toBe(N);
		const at = order.indexOf('S0');
		const nextOf = (i: number) => order[(at + i) % N];
		// the search may walk the ring either way round
		expect([nextOf(1), nextOf(N - 1)]).toContain('S1');
	});
});

describe('5,000-leaf star (forest search depth regression)', () => {
	it('has exactly one spanning tree into its centre, of weight Π k(leaf → centre) [der]', () => {
		const leaves = ids.slice(1);
		const star = plainScheme(
			'Kestrel star',
			ids,
			leaves.map((id, i) => plainStep(`k${i}`, id, ids[0], i < 10 ? 2 : 1, 3))
		);
		const { count, weightSum } = enumerateForests(effectiveRates(star), [0]);
		expect(count).toBe(1);
		// ten leaves at rate 2, the rest at rate 1
		expect(weightSum).toBe(1024);
	});
});
