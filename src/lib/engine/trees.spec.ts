import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { PACER_STEPPER } from './examples';
import { gthFactor, logRootTreeSum } from './gth';
import { effectiveRates, rateMatrix } from './rates';
import { completeScheme } from './random-scheme';
import { bruteForceTreeSums, spanningTreesInto } from './trees';

const counting = JSON.parse(readFileSync(new URL('../../../reference/counting.json', import.meta.url), 'utf8'));

describe('directed spanning trees', () => {
	it.each(counting.cayley.n as number[])('K_%i with unit rates has n^(n−2) trees into each state — Cayley 1889 [pub]', (n) => {
		const scheme = completeScheme(n);
		const list = spanningTreesInto(scheme, 'S0', { limit: 3 });
		expect(list.count).toBe(n ** (n - 2));
		expect(list.weightSum).toBe(n ** (n - 2));
		expect(list.truncated).toBe(n ** (n - 2) > 3);
		// the fast path's pivot product is the same tree sum (GTH, subtraction-free) [pub: Cayley; der: pivots]
		const table = effectiveRates(scheme);
		const f = gthFactor(rateMatrix(table), n, 0);
		expect(Math.abs(Math.exp(logRootTreeSum(f)) / n ** (n - 2) - 1)).toBeLessThan(1e-13);
	});

	it('lists each tree as directed edges pointing to the root, with the product of rates as its weight', () => {
		const list = spanningTreesInto(PACER_STEPPER, 'E');
		// a single 4-cycle has 4 spanning trees (drop one step each) [counting]
		expect(list.count).toBe(4);
		for (const tree of list.trees) {
			expect(tree.edges).toHaveLength(3);
			const next = new Map(tree.edges.map((e) => [e.from, e.to]));
			for (const start of ['T', 'DP', 'D']) {
				let at = start;
				for (let hops = 0; hops < 4 && at !== 'E'; hops++) at = next.get(at)!;
				expect(at).toBe('E');
			}
			const product = tree.edges.reduce((w, e) => w * e.rate, 1);
			expect(tree.weight).toBeCloseTo(product, 8);
		}
	});

	it('counts parallel steps as distinct edges (two parallel steps, two trees)', () => {
		const scheme = completeScheme(2, 3);
		scheme.steps.push({ ...scheme.steps[0], id: 'parallel', kForward: 5, kBackward: 7 });
		const table = effectiveRates(scheme);
		const sums = bruteForceTreeSums(table);
		expect(Array.from(sums)).toEqual([3 + 7, 3 + 5]);
	});

	it('refuses large schemes and unknown states with a clear message', () => {
		expect(() => spanningTreesInto(completeScheme(11), 'S0')).toThrow(/too many/);
		expect(() => spanningTreesInto(completeScheme(3), 'nope')).toThrow(/unknown state "nope"/);
	});
});
