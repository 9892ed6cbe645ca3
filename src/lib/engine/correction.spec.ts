import { describe, expect, it } from 'vitest';
import { auditScheme } from './audit';
import { applyCorrection } from './correction';
import { PACER_STEPPER_MISFIT } from './examples';
import { freeEnergyScheme, mulberry32 } from './random-scheme';
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
	});
});
