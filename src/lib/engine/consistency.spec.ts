import { describe, expect, it } from 'vitest';
import { auditScheme } from './audit';
import { PACER_STEPPER, PACER_STEPPER_MISFIT } from './examples';
import { freeEnergyScheme, mulberry32 } from './random-scheme';
import { withConditions } from './rates';

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
