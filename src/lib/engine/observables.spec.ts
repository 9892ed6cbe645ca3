import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { PACER_STEPPER } from './examples';
import { observables } from './observables';
import type { Scheme, SchemeStep } from './scheme';
import { plainScheme, plainStep } from './random-scheme';

const twoState = JSON.parse(readFileSync(new URL('../../../reference/two-state-periodic.json', import.meta.url), 'utf8'));

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

describe('observables without a load or a step size', () => {
	it('reports null efficiency without load and null randomness without a step size', () => {
		const o = observables({ ...PACER_STEPPER, stepSizeNm: null });
		expect(o.efficiency).toBeNull();
		expect(o.randomness).toBeNull();
		expect(o.velocityNmPerS).toBeGreaterThan(0);
	});
});
