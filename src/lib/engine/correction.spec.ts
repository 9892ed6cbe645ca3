import { describe, expect, it } from 'vitest';
import { auditScheme } from './audit';
import { applyCorrection } from './correction';
import { PACER_STEPPER_MISFIT } from './examples';
import { freeEnergyScheme, mulberry32, plainScheme, plainStep } from './random-scheme';
import type { Scheme } from './scheme';

/** Perturb some rates of a consistent scheme by random factors. */
function spoil(scheme: Scheme, seed: number): Scheme {
	const rand = mulberry32(seed);
	return {
		...scheme,
		steps: scheme.steps.map((s) => (rand() < 0.4 ? { ...s, kForward: s.kForward * 10 ** (2 * rand() - 1) } : s))
	};
}

describe('minimal log-space correction', () => {
	it('spreads the deviation of a single cycle evenly over its 8 rates when none has an uncertainty [der]', () => {
		const audit = auditScheme(PACER_STEPPER_MISFIT);
		const c = audit.correction!;
		expect(c.changes).toHaveLength(8);
		// minimum-norm solution of one linear constraint: every |Δ ln k| = |deviation|·ln10/8
		for (const change of c.changes) expect(Math.abs(Math.log(change.factor))).toBeCloseTo(Math.LN10 / 8, 12);
		const fixed = auditScheme(applyCorrection(PACER_STEPPER_MISFIT, c));
		expect(Math.abs(fixed.cycles[0].deviationLog10!)).toBeLessThan(1e-12);
		expect(fixed.correction).toBeNull();
	});

	it.each([1, 2, 3, 4, 5])('restores consistency on every cycle of a spoiled scheme, and no feasible change is smaller (seed %i)', (seed) => {
		const spoiled = spoil(freeEnergyScheme({ states: 6, steps: 11, seed }), seed + 100);
		const audit = auditScheme(spoiled);
		expect(audit.verdictCounts.violation).toBeGreaterThan(0);
		const c = audit.correction!;
		const fixed = auditScheme(applyCorrection(spoiled, c));
		for (const cycle of fixed.cycles) expect(Math.abs(cycle.deviationLog10!)).toBeLessThan(1e-9);
		// the consistent original is one feasible correction; the proposal is never larger [der]
		const original = freeEnergyScheme({ states: 6, steps: 11, seed });
		let originalNorm = 0;
		spoiled.steps.forEach((s, i) => {
			originalNorm += Math.log(original.steps[i].kForward / s.kForward) ** 2 + Math.log(original.steps[i].kBackward / s.kBackward) ** 2;
		});
		expect(c.weightedSquaredChange).toBeLessThanOrEqual(originalNorm * (1 + 1e-12));
	});

	it('leaves rates with zero uncertainty fixed and moves the uncertain ones', () => {
		const scheme = {
			...PACER_STEPPER_MISFIT,
			steps: PACER_STEPPER_MISFIT.steps.map((s, i) => ({
				...s,
				relUncertaintyForward: i === 2 ? 0.5 : 0,
				relUncertaintyBackward: 0
			}))
		};
		const c = auditScheme(scheme).correction!;
		expect(c.weighting).toBe('uncertainties');
		expect(c.changes.map((x) => `${x.stepId}.${x.rate}`)).toEqual(['Pi release.kForward']);
		expect(c.changes[0].factor).toBeCloseTo(10, 10);
		expect(c.feasible).toBe(true);
	});

	it('regression, an empty proposal when every rate is pinned: infeasible, with the reason, and the finding says so', () => {
		const pinned = {
			...PACER_STEPPER_MISFIT,
			steps: PACER_STEPPER_MISFIT.steps.map((s) => ({ ...s, relUncertaintyForward: 0, relUncertaintyBackward: 0 }))
		};
		const audit = auditScheme(pinned);
		const c = audit.correction!;
		expect(c.feasible).toBe(false);
		expect(c.changes).toEqual([]);
		expect(c.reason).toMatch(/every rate of cycle [A-Z →]*DP[A-Z →]* is fixed/);
		const violation = audit.findings.find((f) => f.kind === 'violation')!;
		expect(violation.message).not.toMatch(/see correction for the smallest rate changes/);
		expect(violation.message).toMatch(/No change of the free rates restores consistency/);
		expect(audit.findings.some((f) => f.kind === 'correction-infeasible')).toBe(true);
	});

	it('is infeasible when the one free rate would have to move two ways at once (two squares sharing a rung)', () => {
		// squares L (a–b–d–c) and R (b–e–f–d) share rung b–d; each is off by one decade in the sense that the rung
		// enters them with opposite signs, so no change of the rung alone can repair both [der]
		const exact = { relUncertaintyForward: 0, relUncertaintyBackward: 0 };
		const scheme = plainScheme('two squares, one free rung (test scheme)', ['a', 'b', 'c', 'd', 'e', 'f'], [
			{ ...plainStep('ab', 'a', 'b', 10, 1), ...exact },
			{ ...plainStep('bd', 'b', 'd', 1, 1), relUncertaintyForward: 0.3, relUncertaintyBackward: 0.3 },
			{ ...plainStep('cd', 'c', 'd', 1, 1), ...exact },
			{ ...plainStep('ac', 'a', 'c', 1, 1), ...exact },
			{ ...plainStep('be', 'b', 'e', 10, 1), ...exact },
			{ ...plainStep('ef', 'e', 'f', 1, 1), ...exact },
			{ ...plainStep('df', 'd', 'f', 1, 1), ...exact }
		]);
		const audit = auditScheme(scheme);
		expect(audit.verdictCounts.violation).toBeGreaterThan(0);
		expect(audit.correction!.feasible).toBe(false);
		expect(audit.correction!.reason).toMatch(/shared with other cycles that need a different change/);
		// giving the other rates an uncertainty makes it feasible, and the repair is complete
		const free = { ...scheme, steps: scheme.steps.map((s) => ({ ...s, relUncertaintyForward: 0.3, relUncertaintyBackward: 0.3 })) };
		const c = auditScheme(free).correction!;
		expect(c.feasible).toBe(true);
		expect(auditScheme(applyCorrection(free, c)).verdictCounts.violation).toBe(0);
	});

	it('regression, violations of a whole decade remained after applying the proposal: balanced combinations of unbalanced cycles are constrained too', () => {
		// m1 and m2 bind Mg (no reaction accounts for it): each alone makes an unbalanced cycle, together a balanced one
		// that is off by one decade; the triangle p–q–r is off by one decade as well
		const scheme = {
			...plainScheme('Mg pair beside a triangle (test scheme)', ['A', 'B', 'C'], [
				plainStep('p', 'A', 'B', 1, 1),
				{ ...plainStep('m1', 'A', 'B', 30, 1), binds: ['Mg'] },
				{ ...plainStep('m2', 'A', 'B', 3, 1), binds: ['Mg'] },
				plainStep('q', 'B', 'C', 10, 1),
				plainStep('r', 'C', 'A', 1, 1)
			]),
			concentrationsM: { Mg: 1e-3 }
		};
		const before = auditScheme(scheme, { maxCycles: 0 });
		expect(before.consistencyScope.balancedCombinations).toHaveLength(1);
		const c = before.correction!;
		expect(c.feasible).toBe(true);
		expect(c.cyclesConstrained).toBe(2);
		const after = auditScheme(applyCorrection(scheme, c));
		expect(after.cyclesComplete).toBe(true);
		expect(after.verdictCounts.violation).toBe(0);
		for (const cycle of after.cycles) if (cycle.deviationLog10 !== null) expect(Math.abs(cycle.deviationLog10)).toBeLessThan(1e-12);
	});

	/** The seeded cases: spoiled consistent schemes, with uncertainties (some exact), zero rates and a cap. */
	function seededCase(seed: number): { scheme: Scheme; maxCycles: number } {
		const rand = mulberry32(seed * 104729);
		let scheme = spoil(freeEnergyScheme({ states: 6 + (seed % 3), steps: 11 + (seed % 4), seed }), seed + 300);
		if (seed % 2 === 0)
			scheme = {
				...scheme,
				steps: scheme.steps.map((s) => ({
					...s,
					relUncertaintyForward: rand() < 0.2 ? 0 : 0.01 + 0.1 * rand(),
					relUncertaintyBackward: rand() < 0.2 ? 0 : 0.01 + 0.1 * rand()
				}))
			};
		if (seed % 3 === 0) scheme = { ...scheme, steps: scheme.steps.map((s, i) => (i === seed % scheme.steps.length ? { ...s, kBackward: 0 } : s)) };
		if (seed % 5 === 0)
			// two Mg-binding steps that no reaction accounts for: unbalanced alone, balanced (and off by 10^0.7) together
			scheme = {
				...scheme,
				concentrationsM: { ...scheme.concentrationsM, Mg: 2e-3 },
				steps: [...scheme.steps, { ...plainStep('mg1', 'S0', 'S1', 50, 2), binds: ['Mg'] }, { ...plainStep('mg2', 'S0', 'S1', 10, 2), binds: ['Mg'] }]
			};
		return { scheme, maxCycles: seed % 4 === 1 ? 0 : seed % 4 === 3 ? 5 : 20_000 };
	}

	it.each([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12])(
		'when feasible, applying the proposal leaves no violation on any cycle (seeded case %i) — Kolmogorov 1936 [pub]; projection [der]',
		(seed) => {
			const { scheme, maxCycles } = seededCase(seed);
			const audit = auditScheme(scheme, { maxCycles });
			expect(audit.verdictCounts.violation).toBeGreaterThan(0);
			const c = audit.correction!;
			if (!c.feasible) {
				expect(c.changes).toEqual([]);
				expect(c.reason).toMatch(/fixed|shared/);
				return;
			}
			const fixed = auditScheme(applyCorrection(scheme, c));
			expect(fixed.cyclesComplete).toBe(true);
			expect(fixed.verdictCounts.violation).toBe(0);
			expect(fixed.correction).toBeNull();
			for (const cycle of fixed.cycles) if (cycle.deviationLog10 !== null) expect(Math.abs(cycle.deviationLog10)).toBeLessThan(1e-9);
			// and the basis alone now decides every cycle
			expect(auditScheme(applyCorrection(scheme, c), { maxCycles: 0 }).consistencyComplete).toBe(true);
		}
	);
});
