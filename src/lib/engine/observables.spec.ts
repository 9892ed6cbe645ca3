import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { PACER_STEPPER } from './examples';
import { observables, stallForce, velocityAt } from './observables';
import type { Scheme, SchemeStep } from './scheme';
import { kJPerMolToPNnm, molarThermalEnergyKJPerMol, thermalEnergyPNnm } from './units';
import { mulberry32, plainScheme, plainStep } from './random-scheme';

const twoState = JSON.parse(readFileSync(new URL('../../../reference/two-state-periodic.json', import.meta.url), 'utf8'));
const tight = JSON.parse(readFileSync(new URL('../../../reference/tight-coupling.json', import.meta.url), 'utf8'));

const scheme = (states: string[], steps: SchemeStep[], extra: Partial<Scheme> = {}): Scheme => ({
	...plainScheme('check', states, steps),
	...extra
});

describe('velocity and diffusion of the two-state periodic model — Derrida 1983; Fisher & Kolomeisky 1999 [pub]', () => {
	it.each(twoState.cases as { u0: number; u1: number; w0: number; w1: number; periodNm: number; firstSubstepFraction: number }[])(
		'u0=$u0 u1=$u1 w0=$w0 w1=$w1 d=$periodNm',
		({ u0, u1, w0, w1, periodNm: d, firstSubstepFraction: f }) => {
			// step a: 0 → 1 forward u0, back w1; step b: 1 → 0 of the next period, forward u1, back w0
			const s = scheme(['0', '1'], [plainStep('a', '0', '1', u0, w1, d * f), plainStep('b', '1', '0', u1, w0, d * (1 - f))], {
				stepSizeNm: d
			});
			const S = u0 + u1 + w0 + w1;
			const V = (d * (u0 * u1 - w0 * w1)) / S;
			const D = ((d * d) / (2 * S)) * (u0 * u1 + w0 * w1 - 2 * (V / d) ** 2);
			const o = observables(s);
			expect(Math.abs(o.velocityNmPerS - V)).toBeLessThanOrEqual(twoState.relativeTolerance * Math.max(Math.abs(V), d * S * 1e-3));
			expect(Math.abs(o.diffusionNm2PerS / D - 1)).toBeLessThan(twoState.relativeTolerance);
			if (V !== 0) expect(o.randomness!).toBeCloseTo((2 * D) / (Math.abs(V) * d), 10); // Svoboda, Mitra & Block 1994 [pub]
			else expect(o.randomness).toBeNull();
		}
	);
});

/** A tightly coupled single cycle: n × (ATP binding, power stroke, ADP release, Pi release), d nm in total. */
function tightCycle(n: number, d: number, dG0: number, c: Record<string, number>, seed: number): Scheme {
	const rand = mulberry32(seed);
	const states: string[] = [];
	const steps: SchemeStep[] = [];
	const k = 4 * n;
	for (let i = 0; i < k; i++) states.push(`M${i}`);
	for (let i = 0; i < k; i++) {
		const st = plainStep(`t${i}`, states[i], states[(i + 1) % k], 10 ** (1 + 3 * rand()), 10 ** (3 * rand()), i % 4 === 1 ? d / n : 0);
		if (i % 4 === 0) st.binds = ['ATP'];
		if (i % 4 === 2) st.releases = ['ADP'];
		if (i % 4 === 3) st.releases = ['Pi'];
		st.loadFraction = Math.round(rand() * 100) / 100;
		steps.push(st);
	}
	// close the cycle thermodynamically: Σ ln kF − Σ ln kB = −n ΔG°'/RT [der from Hill 1989]
	let lnRatio = 0;
	for (const st of steps.slice(0, -1)) lnRatio += Math.log(st.kForward / st.kBackward);
	steps[k - 1].kBackward = Math.exp(lnRatio + Math.log(steps[k - 1].kForward) + (n * dG0) / molarThermalEnergyKJPerMol(298.15));
	return scheme(states, steps, {
		concentrationsM: c,
		reactions: [{ id: 'ATP hydrolysis', stoichiometry: { ATP: -1, ADP: 1, Pi: 1 }, deltaG0kJPerMol: dG0 }],
		stepSizeNm: d
	});
}

describe('stall force and efficiency of tightly coupled motors', () => {
	type Case = { atpPerCycle: number; stepNm: number; deltaG0kJPerMol: number; concentrationsM: Record<string, number> };
	it.each(tight.cases as Case[])(
		'stalls at n·Δμ/d for n=$atpPerCycle, d=$stepNm nm — tight coupling [der]; 1 ATP per 8 nm, Schnitzer & Block 1997 [pub]',
		({ atpPerCycle: n, stepNm: d, deltaG0kJPerMol: dG0, concentrationsM: c }) => {
			const s = tightCycle(n, d, dG0, c, 7 * n + d);
			const kT = thermalEnergyPNnm(298.15);
			const deltaMu = -(kJPerMolToPNnm(dG0) + kT * Math.log((c.ADP * c.Pi) / c.ATP));
			const expected = (n * deltaMu) / d;
			const F = stallForce(s);
			expect(Math.abs(F / expected - 1)).toBeLessThan(tight.relativeTolerance);
			// efficiency of a tight motor is F/F_stall [der]
			const half = observables({ ...s, forcePN: expected / 2 });
			expect(half.efficiency!).toBeCloseTo(0.5, 8);
			expect(half.reactionRatesPerS['ATP hydrolysis'] * d).toBeCloseTo(n * half.velocityNmPerS, 6);
		}
	);

	it('velocityAt falls with load and changes sign at the stall force', () => {
		const F = stallForce(PACER_STEPPER);
		expect(velocityAt(PACER_STEPPER, 0)).toBeGreaterThan(velocityAt(PACER_STEPPER, F / 2));
		expect(velocityAt(PACER_STEPPER, F * 0.99)).toBeGreaterThan(0);
		expect(velocityAt(PACER_STEPPER, F * 1.01)).toBeLessThan(0);
	});

	it('refuses to invent a stall force when V does not change sign', () => {
		const undriven = scheme(['A', 'B'], [plainStep('a', 'A', 'B', 5, 5, 4), plainStep('b', 'B', 'A', 5, 5, 4)]);
		expect(velocityAt(undriven, 0)).toBe(0);
		const oneWay = scheme(['A', 'B'], [plainStep('a', 'A', 'B', 5, 0, 4), plainStep('b', 'B', 'A', 5, 0, 4)]);
		expect(() => stallForce(oneWay)).toThrow(/no stall force/);
		expect(() => stallForce(PACER_STEPPER, { bracketPN: [0, 1] })).toThrow(/does not change sign/);
	});

	it('does not take the load where an irreversible motor’s velocity underflows for a stall (regression: 32 pN reported)', () => {
		// With a zero back rate the motor never runs backwards: V(F) > 0 decays towards 0 and underflows [der].
		const noReturn = { ...PACER_STEPPER, steps: PACER_STEPPER.steps.map((s, i) => (i === 0 ? { ...s, kBackward: 0 } : s)) };
		expect(velocityAt(noReturn, 5)).toBeGreaterThan(0);
		expect(() => stallForce(noReturn)).toThrow(/without reversing|no stall force/);
		// The reversible motor keeps a true stall, where V changes sign.
		const F = stallForce(PACER_STEPPER);
		expect(velocityAt(PACER_STEPPER, F - 0.5)).toBeGreaterThan(0);
		expect(velocityAt(PACER_STEPPER, F + 0.5)).toBeLessThan(0);
	});

	it('reports null efficiency without load and null randomness without a step size', () => {
		const o = observables({ ...PACER_STEPPER, stepSizeNm: null });
		expect(o.efficiency).toBeNull();
		expect(o.randomness).toBeNull();
		expect(o.velocityNmPerS).toBeGreaterThan(0);
	});
});
