import { readFileSync } from 'node:fs';
import Fraction from 'fraction.js';
import { all, create } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { cycleFluxes } from './fluxes';
import { effectiveRates } from './rates';
import { plainScheme, plainStep, randomScheme } from './random-scheme';
import type { Scheme } from './scheme';
import { steadyState, stepFluxes } from './steady-state';

const exact = JSON.parse(readFileSync(new URL('../../../reference/three-state-exact.json', import.meta.url), 'utf8'));
const fractionMath = create(all, { number: 'Fraction' });

function threeStateScheme(): Scheme {
	const k = exact.rates;
	return plainScheme('three-state check', ['1', '2', '3'], [
		plainStep('a', '1', '2', k.k12, k.k21),
		plainStep('b', '2', '3', k.k23, k.k32),
		plainStep('c', '3', '1', k.k31, k.k13)
	]);
}

/** Exact steady state with mathjs in fraction arithmetic: solve Lᵀp = 0 with one row replaced by Σp = 1. */
function exactSteadyState(scheme: Scheme): Fraction[] {
	const table = effectiveRates(scheme);
	const n = table.n;
	const L = Array.from({ length: n }, () => Array.from({ length: n }, () => new Fraction(0)));
	scheme.steps.forEach((step, s) => {
		const a = table.from[s];
		const b = table.to[s];
		const kp = new Fraction(step.kForward);
		const km = new Fraction(step.kBackward);
		L[a][a] = L[a][a].add(kp);
		L[a][b] = L[a][b].sub(kp);
		L[b][b] = L[b][b].add(km);
		L[b][a] = L[b][a].sub(km);
	});
	const A = Array.from({ length: n }, (_, i) =>
		Array.from({ length: n }, (_, j) => (i === 0 ? fractionMath.fraction(1) : fractionMath.fraction(L[j][i].toFraction())))
	);
	const b = Array.from({ length: n }, (_, i) => [fractionMath.fraction(i === 0 ? 1 : 0)]);
	const x = fractionMath.lusolve(fractionMath.matrix(A), fractionMath.matrix(b)).toArray() as unknown as { toFraction(): string }[][];
	return x.map((row) => new Fraction(row[0].toFraction()));
}

describe('steady state by GTH elimination', () => {
	it('reproduces the exact three-state example: Σ_i = (17, 11, 10), Σ = 38 [der], checked against fraction.js', () => {
		const table = effectiveRates(threeStateScheme());
		const ss = steadyState(table);
		const sigma = new Fraction(exact.sigma);
		exact.treeSums.forEach((t: string, i: number) => {
			const p = new Fraction(t).div(sigma);
			expect(Math.abs(ss.p[i] / p.valueOf() - 1)).toBeLessThan(1e-15);
		});
		expect(Math.abs(Math.exp(ss.logSigma) / sigma.valueOf() - 1)).toBeLessThan(1e-14);
		const exactP = exactSteadyState(threeStateScheme());
		exactP.forEach((p, i) => expect(p.equals(new Fraction(exact.treeSums[i]).div(sigma))).toBe(true));
	});

	it('gives Hill one-way fluxes 12/19 and 1/38 on the three-state cycle [der, fraction.js]', () => {
		const table = effectiveRates(threeStateScheme());
		const ss = steadyState(table);
		const cycle = { states: [0, 1, 2], steps: [0, 1, 2].map((step) => ({ step, direction: 1 as const })) };
		const lnF = Math.log(2 * 3 * 4);
		const lnB = Math.log(1);
		const f = cycleFluxes(ss.K, 3, ss.logSigma, [cycle], [lnF], [lnB]);
		expect(Math.abs(f.forward[0] / new Fraction(exact.forwardFlux).valueOf() - 1)).toBeLessThan(1e-14);
		expect(Math.abs(f.backward[0] / new Fraction(exact.backwardFlux).valueOf() - 1)).toBeLessThan(1e-14);
		const J = stepFluxes(table, ss.p);
		for (const j of J) expect(Math.abs(j / new Fraction(exact.netFlux).valueOf() - 1)).toBeLessThan(1e-14);
	});

	it.each([11, 12, 13, 14, 15])('matches the exact rational steady state of a random integer-rate scheme (seed %i) [mathjs fractions]', (seed) => {
		const scheme = randomScheme({ states: 6, steps: 10, seed });
		scheme.steps = scheme.steps.map((s) => ({ ...s, kForward: Math.ceil(s.kForward), kBackward: Math.ceil(s.kBackward) }));
		const ss = steadyState(effectiveRates(scheme));
		const p = exactSteadyState(scheme);
		p.forEach((pi, i) => expect(Math.abs(ss.p[i] / pi.valueOf() - 1)).toBeLessThan(1e-13));
	});

	it('puts exactly zero probability on a state that zero rates make transient', () => {
		const scheme = threeStateScheme();
		scheme.steps[0] = { ...scheme.steps[0], kBackward: 0 };
		scheme.steps[2] = { ...scheme.steps[2], kForward: 0 };
		// state 1 can leave to 2 (k12) and to 3? k13 = 1 still > 0, but nothing comes back into 1
		const ss = steadyState(effectiveRates(scheme));
		expect(ss.p[0]).toBe(0);
		expect(ss.p[1] + ss.p[2]).toBeCloseTo(1, 15);
	});

	it('refuses a scheme whose steady state is not unique, naming the states', () => {
		const scheme = threeStateScheme();
		scheme.steps[0] = { ...scheme.steps[0], kForward: 0 }; // 1 → 2 never
		scheme.steps[2] = { ...scheme.steps[2], kBackward: 0 }; // 1 → 3 never: state 1 absorbs
		expect(steadyState(effectiveRates(scheme)).p[0]).toBe(1);
		scheme.steps[2] = { ...scheme.steps[2], kForward: 0 }; // now 3 ↔ 2 is a second closed class
		scheme.steps[0] = { ...scheme.steps[0], kBackward: 0 };
		expect(() => steadyState(effectiveRates(scheme))).toThrow(/not unique: state "\d" can never reach state "\d".*zero rate/);
	});
});
