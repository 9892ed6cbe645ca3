import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { auditScheme } from './audit';
import { efficiency } from './efficiency';
import { PACER_STEPPER, PACER_STEPPER_MISFIT } from './examples';
import { observables } from './observables';
import { freeEnergyScheme } from './random-scheme';
import { stallForce } from './stall';
import { kJPerMolToPNnm, thermalEnergyPNnm } from './units';

const kT = thermalEnergyPNnm(298.15);
const c = PACER_STEPPER.concentrationsM;
// Pacer-1 is tightly coupled: one ATP per 8 nm, so it stalls at Δμ/8 nm [der]
const deltaMu = -(kJPerMolToPNnm(-30.5) + kT * Math.log((c.ADP * c.Pi) / c.ATP));
const stall = deltaMu / 8;
const at = (forcePN: number) => auditScheme({ ...PACER_STEPPER, forcePN }).observables;

describe('efficiency by regime — Parmeggiani, Jülicher, Ajdari & Prost 1999, PRE 60:2127 [pub]', () => {
	it.each([0.1, 0.5, 0.9, 0.999])('motor regime of a tight motor at F = %f·F_stall: η = F/F_stall [der]', (x) => {
		const o = at(x * stall);
		expect(o.efficiencyRegime).toBe('motor');
		expect(o.efficiency!).toBeCloseTo(x, 7);
		expect(observables({ ...PACER_STEPPER, forcePN: x * stall }).efficiency!).toBeCloseTo(x, 7);
	});

	it.each([1.001, 1.22, 2, 5])('regression, η = 1.22 printed past stall: synthase regime at F = %f·F_stall gives F_stall/F [der]', (x) => {
		const o = at(x * stall);
		expect(o.velocityNmPerS).toBeLessThan(0);
		expect(o.reactionRatesPerS['ATP hydrolysis']).toBeLessThan(0); // the load drives ATP synthesis
		expect(o.efficiencyRegime).toBe('synthase');
		expect(o.efficiency!).toBeCloseTo(1 / x, 7);
		expect(o.efficiency!).toBeLessThanOrEqual(1);
	});

	it.each([-0.5, -3, -20])('regression, η = −0.33 under assisting load: null with the reason at %f pN', (F) => {
		const o = at(F);
		expect(o.velocityNmPerS).toBeGreaterThan(0);
		expect(o.efficiency).toBeNull();
		expect(o.efficiencyRegime).toBeNull();
		expect(o.efficiencyNote).toMatch(/assists the motion/);
		expect(observables({ ...PACER_STEPPER, forcePN: F }).efficiency).toBeNull();
	});

	it('is null without load, and at stall, each with its reason', () => {
		expect(at(0).efficiencyNote).toMatch(/no load/);
		expect(efficiency({ forcePN: 3, velocityNmPerS: 0, reactionRatesPerS: [0], reactionDeltaGpNnm: [-80] }).reason).toMatch(/stalled/);
		expect(efficiency({ forcePN: 3, velocityNmPerS: -2, reactionRatesPerS: [], reactionDeltaGpNnm: [] }).reason).toMatch(/no reference reaction/);
	});

	it('refuses values the second law forbids instead of printing them (entropy production T·σ = chemical − mechanical power ≥ 0) [der]', () => {
		// 3 pN × 20 nm/s of work from 1 /s × 50 pN·nm of chemistry would be η = 1.2; work with uphill chemistry is worse
		const over = efficiency({ forcePN: 3, velocityNmPerS: 20, reactionRatesPerS: [1], reactionDeltaGpNnm: [-50] });
		expect(over.value).toBeNull();
		expect(over.reason).toMatch(/above 1.*second law/);
		const uphill = efficiency({ forcePN: 3, velocityNmPerS: 2, reactionRatesPerS: [-1], reactionDeltaGpNnm: [-50] });
		expect(uphill.value).toBeNull();
		expect(uphill.reason).toMatch(/second law/);
		// an inconsistent scheme (the mistyped Pacer-1) gets a value in [0, 1] or a reason, never more
		for (const F of [2, 6, 10, 14, 20]) {
			const o = auditScheme({ ...PACER_STEPPER_MISFIT, forcePN: F }).observables;
			if (o.efficiency === null) expect(o.efficiencyNote).toBeTruthy();
			else {
				expect(o.efficiency).toBeGreaterThanOrEqual(0);
				expect(o.efficiency).toBeLessThanOrEqual(1);
			}
		}
	});

	it('lies in [0, 1] or is null with a reason on seeded consistent schemes at any load (fast-check) [der]', () => {
		fc.assert(
			fc.property(fc.integer({ min: 1, max: 5000 }), fc.integer({ min: 2, max: 7 }), fc.double({ min: -40, max: 40, noNaN: true }), (seed, n, F) => {
				const s = { ...freeEnergyScheme({ states: n, steps: n + 2, seed }), forcePN: F };
				const o = auditScheme(s).observables;
				if (o.efficiency === null) {
					expect(o.efficiencyNote).toBeTruthy();
					expect(o.efficiencyRegime).toBeNull();
				} else {
					expect(o.efficiency).toBeGreaterThanOrEqual(0);
					expect(o.efficiency).toBeLessThanOrEqual(1);
					// the regime follows the sign of the mechanical power F·V [pub]
					expect(o.efficiencyRegime).toBe(F * o.velocityNmPerS > 0 ? 'motor' : 'synthase');
				}
			}),
			{ numRuns: 60, seed: 1999 }
		);
	});

	it('a tight motor turns its stall force into exactly Δμ per step: η → 1 on either side of the stall [der]', () => {
		const F = stallForce(PACER_STEPPER);
		expect(at(F * 0.9999).efficiency!).toBeCloseTo(0.9999, 6);
		expect(at(F * 1.0001).efficiency!).toBeCloseTo(1 / 1.0001, 6);
	});
});
