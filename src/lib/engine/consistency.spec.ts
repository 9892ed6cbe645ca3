import { describe, expect, it } from 'vitest';
import { auditScheme } from './audit';
import { PACER_STEPPER, PACER_STEPPER_MISFIT } from './examples';
import { freeEnergyScheme, mulberry32, plainScheme, plainStep } from './random-scheme';
import { withConditions } from './rates';
import type { Scheme } from './scheme';

describe('thermodynamic consistency', () => {
	it.each([1, 2, 3, 4, 5, 6])(
		'a scheme built from state free energies is consistent at every load, concentration and temperature — Wegscheider 1901; Hill 1989; Bell 1978 [pub] (seed %i)',
		(seed) => {
			const base = freeEnergyScheme({ states: 6, steps: 11, seed });
			const rand = mulberry32(seed * 31);
			let judged = 0;
			for (let trial = 0; trial < 8; trial++) {
				const scheme = withConditions(base, {
					forcePN: 20 * rand() - 10,
					concentrationsM: { ATP: 10 ** (-7 + 5 * rand()), ADP: 10 ** (-7 + 5 * rand()), Pi: 10 ** (-6 + 4 * rand()) }
				});
				const audit = auditScheme(scheme);
				for (const c of audit.cycles) {
					expect(c.verdict).toBe('consistent');
					expect(Math.abs(c.deviationLog10!)).toBeLessThan(1e-9);
					judged++;
				}
				expect(audit.basisVerdicts.every((b) => b.verdict === 'consistent')).toBe(true);
				expect(audit.correction).toBeNull();
			}
			expect(judged).toBeGreaterThan(8 * 6);
		}
	);

	it('finds the mistyped rate of the demo scheme: deviation −1 in log10 (a factor of 10)', () => {
		expect(auditScheme(PACER_STEPPER).cycles[0].verdict).toBe('consistent');
		const [cycle] = auditScheme(PACER_STEPPER_MISFIT).cycles;
		expect(cycle.verdict).toBe('violation');
		expect(cycle.deviationLog10).toBeCloseTo(-1, 12);
		expect(cycle.netReaction).toEqual({ 'ATP hydrolysis': 1 });
		expect(cycle.displacementNm).toBe(8);
	});

	it('accepts a deviation within 2σ of the stated uncertainties, and only then', () => {
		const withUncertainty = {
			...PACER_STEPPER_MISFIT,
			steps: PACER_STEPPER_MISFIT.steps.map((s) => ({ ...s, relUncertaintyForward: 0.8, relUncertaintyBackward: 0.8 }))
		};
		const [c] = auditScheme(withUncertainty).cycles;
		// σ_log10 = sqrt(8 · 0.8²)/ln 10 ≈ 0.98; |−1| ≤ 2σ [trade: first-order propagation]
		expect(c.sigmaLog10).toBeCloseTo(Math.sqrt(8 * 0.64) / Math.LN10, 12);
		expect(c.verdict).toBe('consistent');
		expect(auditScheme(PACER_STEPPER_MISFIT, { sigmaFactor: 0.5 }).cycles[0].verdict).toBe('violation');
	});

	it('calls a cycle with a zero rate irreversible and one with unmatched chemistry unbalanced', () => {
		const zero = { ...PACER_STEPPER, steps: PACER_STEPPER.steps.map((s, i) => (i === 0 ? { ...s, kBackward: 0 } : s)) };
		const a = auditScheme(zero);
		expect(a.cycles[0].verdict).toBe('irreversible');
		expect(a.cycles[0].log10RateRatio).toBeNull();
		expect(a.findings.some((f) => f.kind === 'zero-rate' && f.path === 'steps[0].kBackward')).toBe(true);
		const leaky = { ...PACER_STEPPER, steps: PACER_STEPPER.steps.map((s, i) => (i === 2 ? { ...s, releases: [] } : s)) };
		const b = auditScheme(leaky);
		expect(b.cycles[0].verdict).toBe('unbalanced');
		expect(b.cycles[0].netReaction).toBeNull();
		expect(b.cycles[0].expectedLog10).toBeNull();
	});

	it('writes {} for a cycle with no net chemistry', () => {
		const audit = auditScheme(freeEnergyScheme({ states: 4, steps: 6, seed: 3 }));
		const neutral = audit.cycles.filter((c) => c.netReaction && Object.keys(c.netReaction).length === 0);
		for (const c of neutral) expect(c.netReaction).toEqual({});
		expect(audit.cycles.every((c) => c.netReaction !== null)).toBe(true);
	});
});

/**
 * A ladder of `squares` squares: states T0…Tk on top, B0…Bk below; rungs Ti–Bi and the bottom rail listed
 * first (they form the spanning tree), then the top rail, each of whose steps closes one square. Rates are
 * consistent (no driving, free energies 0), except that every top-rail forward rate is multiplied by
 * 10^offsetLog10: each square then deviates by offsetLog10 and a cycle over j adjacent squares by j·offsetLog10 [der].
 */
function ladder(squares: number, offsetLog10: number) {
	const states: string[] = [];
	for (let i = 0; i <= squares; i++) states.push(`T${i}`, `B${i}`);
	const steps = [];
	for (let i = 0; i <= squares; i++) steps.push(plainStep(`rung${i}`, `T${i}`, `B${i}`, 5, 5));
	for (let i = 0; i < squares; i++) steps.push(plainStep(`bottom${i}`, `B${i}`, `B${i + 1}`, 3, 3));
	for (let i = 0; i < squares; i++) steps.push(plainStep(`top${i}`, `T${i}`, `T${i + 1}`, 2 * 10 ** offsetLog10, 2));
	return plainScheme(`ladder of ${squares} squares (Kestrel Motility Lab test scheme)`, states, steps);
}

const withStep = (scheme: Scheme, id: string, change: Partial<Scheme['steps'][number]>): Scheme => ({
	...scheme,
	steps: scheme.steps.map((s) => (s.id === id ? { ...s, ...change } : s))
});

describe('what the consistency verdicts cover (consistencyComplete, consistencyScope)', () => {
	it('regression, a basis within tolerance said to decide all cycles: six squares off by 0.008 make a cycle off by 0.048', () => {
		const scheme = ladder(6, 0.008);
		const basisOnly = auditScheme(scheme, { maxCycles: 0 });
		// the basis is the six squares, each inside the 0.01 tolerance
		expect(basisOnly.basisVerdicts).toHaveLength(6);
		for (const b of basisOnly.basisVerdicts) {
			expect(b.verdict).toBe('consistent');
			expect(Math.abs(b.deviationLog10!)).toBeCloseTo(0.008, 12);
		}
		expect(basisOnly.consistencyComplete).toBe(false);
		// deviations add along cycle space: the outer cycle deviates by the sum, 6 × 0.008 [der]
		expect(basisOnly.consistencyScope.deviationBoundLog10).toBeCloseTo(0.048, 12);
		const incomplete = basisOnly.findings.find((f) => f.kind === 'consistency-incomplete');
		expect(incomplete?.message).toMatch(/may deviate by up to 0\.048 log10 units/);
		expect(basisOnly.findings.some((f) => /decides all cycles/.test(f.message))).toBe(false);

		// the whole list: a ladder of k squares has C(k+1, 2) simple cycles, one per pair of rungs [der: counting];
		// those over two or more squares deviate by ≥ 0.016 and break the tolerance
		const all = auditScheme(scheme);
		expect(all.cyclesComplete).toBe(true);
		expect(all.consistencyComplete).toBe(true);
		expect(all.cycleCount).toBe(21);
		expect(all.verdictCounts).toEqual({ consistent: 6, violation: 15, irreversible: 0, unbalanced: 0 });
		const worst = Math.max(...all.cycles.map((c) => Math.abs(c.deviationLog10!)));
		expect(worst).toBeCloseTo(0.048, 12);
		// the bound holds for every cycle [der]
		expect(worst).toBeLessThanOrEqual(basisOnly.consistencyScope.deviationBoundLog10 + 1e-12);
	});

	it('regression, a cap of 5 listed five violations while verdictCounts said 0: the listed cycles are counted', () => {
		const audit = auditScheme(ladder(6, 0.008), { maxCycles: 5 });
		expect(audit.cycleCount).toBe(5);
		const listedViolations = audit.cycles.filter((c) => c.verdict === 'violation').length;
		expect(listedViolations).toBeGreaterThan(0);
		expect(audit.verdictCounts.violation).toBe(listedViolations);
		const total = Object.values(audit.verdictCounts).reduce((a, b) => a + b, 0);
		expect(total).toBeGreaterThanOrEqual(audit.cycleCount);
		expect(audit.consistencyComplete).toBe(false);
		expect(audit.findings.find((f) => f.kind === 'cycle-cap')?.message).toMatch(/cap maxCycles = 5 was reached/);
		expect(audit.correction?.feasible).toBe(true);
	});

	it('regression, the cap was blamed when the work budget stopped the search: a ring of 400 states', () => {
		const n = 400;
		const states = Array.from({ length: n }, (_, i) => `R${i}`);
		const steps = states.map((s, i) => plainStep(`r${i}`, s, states[(i + 1) % n], 2, 2));
		const audit = auditScheme(plainScheme('ring of 400 states (test scheme)', states, steps), { maxCycles: 10 });
		// one cycle, but a depth-first search from every state walks about n²/2 > 100 000 steps [der]
		expect(audit.consistencyScope.listingStoppedBy).toBe('work budget');
		const cap = audit.findings.find((f) => f.kind === 'cycle-cap')!.message;
		expect(cap).toMatch(/work budget/);
		expect(cap).toMatch(/cap maxCycles = 10 was not reached/);
		// the one basis cycle is exactly consistent, so every cycle is decided
		expect(audit.consistencyComplete).toBe(true);
	});

	it('regression, a zero rate on the spanning tree masked a violation: the basis takes reversible steps first', () => {
		// A–B irreversible, listed first; the 4-cycle A → C → B → D → A avoids it and is off by a factor of 10
		const base = plainScheme('zero rate on the tree (test scheme)', ['A', 'B', 'C', 'D'], [
			plainStep('ab', 'A', 'B', 1, 0),
			plainStep('ac', 'A', 'C', 1, 1),
			plainStep('ad', 'A', 'D', 1, 1),
			plainStep('cb', 'C', 'B', 10, 1),
			plainStep('bd', 'B', 'D', 1, 1)
		]);
		const basisOnly = auditScheme(base, { maxCycles: 0 });
		expect(basisOnly.basisVerdicts.map((b) => b.verdict).sort()).toEqual(['irreversible', 'violation']);
		expect(basisOnly.verdictCounts.violation).toBe(1);
		expect(basisOnly.correction?.feasible).toBe(true);
		// the enumeration agrees: one reversible cycle, a violation of exactly one decade [der]
		const all = auditScheme(base);
		const reversible = all.cycles.filter((c) => c.verdict !== 'irreversible');
		expect(reversible).toHaveLength(1);
		expect(reversible[0].verdict).toBe('violation');
		expect(Math.abs(reversible[0].deviationLog10!)).toBeCloseTo(1, 12);
	});

	it('regression, an unbalanced step on the spanning tree masked a violation: balanced steps go first', () => {
		// A–B binds Mg, which no reference reaction accounts for; the cycle A → C → B → D → A has no Mg and is off by 10
		const base = {
			...plainScheme('unbalanced step on the tree (test scheme)', ['A', 'B', 'C', 'D'], [
				{ ...plainStep('ab', 'A', 'B', 1, 1), binds: ['Mg'] },
				plainStep('ac', 'A', 'C', 1, 1),
				plainStep('ad', 'A', 'D', 1, 1),
				plainStep('cb', 'C', 'B', 10, 1),
				plainStep('bd', 'B', 'D', 1, 1)
			]),
			concentrationsM: { Mg: 1e-3 }
		};
		const basisOnly = auditScheme(base, { maxCycles: 0 });
		expect(basisOnly.basisVerdicts.map((b) => b.verdict).sort()).toEqual(['unbalanced', 'violation']);
		expect(basisOnly.verdictCounts.violation).toBe(1);
		expect(auditScheme(base).verdictCounts).toEqual({ consistent: 0, violation: 1, irreversible: 0, unbalanced: 2 });
	});

	it('judges balanced combinations of cycles that are unbalanced alone, exactly (two Mg-binding parallel steps)', () => {
		// steps m1, m2 bind Mg from A to B, p is plain: {m1, p} and {m2, p} are unbalanced, {m1, m2} is balanced
		const base = {
			...plainScheme('parallel Mg steps (test scheme)', ['A', 'B'], [
				plainStep('p', 'A', 'B', 1, 1),
				{ ...plainStep('m1', 'A', 'B', 30, 1), binds: ['Mg'] },
				{ ...plainStep('m2', 'A', 'B', 3, 1), binds: ['Mg'] }
			]),
			concentrationsM: { Mg: 1e-3 }
		};
		const basisOnly = auditScheme(base, { maxCycles: 0 });
		expect(basisOnly.basisVerdicts.every((b) => b.verdict === 'unbalanced')).toBe(true);
		const [combination] = basisOnly.consistencyScope.balancedCombinations;
		expect(combination.coefficients.map(Math.abs)).toEqual([1, 1]);
		// log10(30/3) = 1 whichever way round [der]
		expect(Math.abs(combination.deviationLog10)).toBeCloseTo(1, 12);
		expect(combination.verdict).toBe('violation');
		expect(basisOnly.consistencyComplete).toBe(false);
		expect(basisOnly.consistencyScope.deviationBoundLog10).toBeCloseTo(1, 12);
		const all = auditScheme(base);
		expect(all.verdictCounts).toEqual({ consistent: 0, violation: 1, irreversible: 0, unbalanced: 2 });
		expect(Math.abs(all.cycles.find((c) => c.verdict === 'violation')!.deviationLog10!)).toBeCloseTo(1, 12);
	});

	it.each([1, 2, 3, 4, 5, 6])(
		'no listed cycle deviates by more than the bound, and a bound within tolerance means no violation anywhere (seed %i) [der]',
		(seed) => {
			const rand = mulberry32(seed * 7919);
			const base = freeEnergyScheme({ states: 7, steps: 14, seed });
			for (const size of [0.0005, 0.004, 0.05]) {
				const scheme = {
					...base,
					steps: base.steps.map((s) => (rand() < 0.5 ? { ...s, kForward: s.kForward * 10 ** (size * (2 * rand() - 1)) } : s))
				};
				const basisOnly = auditScheme(scheme, { maxCycles: 0 });
				const all = auditScheme(scheme);
				expect(all.cyclesComplete).toBe(true);
				const bound = basisOnly.consistencyScope.deviationBoundLog10;
				for (const c of all.cycles) if (c.deviationLog10 !== null) expect(Math.abs(c.deviationLog10)).toBeLessThanOrEqual(bound + 1e-12);
				if (basisOnly.consistencyComplete) expect(all.verdictCounts.violation).toBe(0);
				if (all.verdictCounts.violation > 0) expect(basisOnly.consistencyComplete).toBe(false);
			}
		}
	);
});
