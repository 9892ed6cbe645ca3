/**
 * Motor observables at steady state: mean velocity V and effective diffusion coefficient D from the tilted
 * generator without eigenvalues or finite differences, randomness, entropy production (step form),
 * turnover rate of each reference reaction and efficiency.
 *
 * V = p·Q1·1;  Q r = V·1 − Q1·1 with p·r = 0;  D = ½·p·Q2·1 + p·Q1·r  [der], equivalent to the derivatives of
 * the top eigenvalue of the tilted generator (characteristic-polynomial form: Koza 1999, J Phys A 32:7637 [pub]).
 * Randomness 2D/(|V|·δ) (positive for either direction of motion): Svoboda, Mitra & Block 1994, PNAS 91:11782 [pub]. Entropy production
 * Σ_s J_s ln(p_from k+/(p_to k−)): Schnakenberg 1976, Rev Mod Phys 48:571 [pub]. Efficiency by regime: efficiency.ts;
 * stall forces: stall.ts.
 * Cost: O(n³) for the GTH factors (shared with the steady state), O(n² + steps) for V, D and the rest;
 * Invariants: the Poisson solve reuses the subtraction-free GTH pivots; entropy production ≥ 0 (null when a
 * zero rate makes it infinite); efficiency in [0, 1] or null (efficiency.ts).
 */
import { chemistryModel, type ChemistryModel } from './chemistry';
import { leastSquares } from './dense';
import { efficiency } from './efficiency';
import { solvePoisson } from './gth';
import { effectiveRates, withConditions, type RateTable } from './rates';
import type { Scheme } from './scheme';
import { steadyState, stepFluxes, type SteadyState } from './steady-state';

export interface Observables {
	velocityNmPerS: number;
	diffusionNm2PerS: number;
	randomness: number | null;
	entropyProductionKTPerS: number | null;
	reactionRatesPerS: Record<string, number>;
	efficiency: number | null;
}

/** V and D of a steady state. */
export function velocityAndDiffusion(table: RateTable, ss: SteadyState): { velocity: number; diffusion: number } {
	const { n, m, from, to, kPlus, kMinus, displacementNm } = table;
	const { p } = ss;
	// (Q1·1)_i and (Q2·1)_i: out-rates of i weighted by displacement and displacement²
	const q1 = new Float64Array(n);
	let velocity = 0;
	let half2 = 0;
	for (let s = 0; s < m; s++) {
		const d = displacementNm[s];
		if (d === 0) continue;
		q1[from[s]] += kPlus[s] * d;
		q1[to[s]] -= kMinus[s] * d;
		velocity += (p[from[s]] * kPlus[s] - p[to[s]] * kMinus[s]) * d;
		half2 += 0.5 * (p[from[s]] * kPlus[s] + p[to[s]] * kMinus[s]) * d * d;
	}
	// L r = Q1·1 − V·1 (L = −Q), then centre so that p·r = 0
	const c = new Float64Array(n);
	for (let i = 0; i < n; i++) c[i] = q1[i] - velocity;
	const r = solvePoisson(ss.factor, c);
	let shift = 0;
	for (let i = 0; i < n; i++) shift += p[i] * r[i];
	let cross = 0;
	for (let s = 0; s < m; s++) {
		const d = displacementNm[s];
		if (d === 0) continue;
		cross += p[from[s]] * kPlus[s] * d * (r[to[s]] - shift) - p[to[s]] * kMinus[s] * d * (r[from[s]] - shift);
	}
	return { velocity, diffusion: half2 + cross };
}

/** Step form of the entropy production, kB/s; Infinity when a step with net flux has a zero rate. */
export function entropyProduction(table: RateTable, p: Float64Array, J: Float64Array): number {
	let sigma = 0;
	for (let s = 0; s < table.m; s++) {
		if (J[s] === 0) continue;
		const lnUp = Math.log(p[table.from[s]]) + table.lnPlus[s];
		const lnDown = Math.log(p[table.to[s]]) + table.lnMinus[s];
		sigma += J[s] * (lnUp - lnDown);
	}
	return sigma;
}

/** Turnover rate of each reference reaction: least-squares fit of the species exchange rates. */
export function reactionRates(chemistry: ChemistryModel, J: Float64Array): number[] {
	const X = chemistry.species.length;
	const R = chemistry.reactionIds.length;
	if (R === 0) return [];
	const production = new Array<number>(X).fill(0);
	for (let s = 0; s < J.length; s++) for (let x = 0; x < X; x++) production[x] += J[s] * chemistry.stepExchange[s * X + x];
	return leastSquares(chemistry.S, production);
}

export function observablesOf(
	scheme: Scheme,
	table: RateTable,
	ss: SteadyState,
	chemistry: ChemistryModel,
	J: Float64Array
): Observables {
	const { velocity, diffusion } = velocityAndDiffusion(table, ss);
	const sigma = entropyProduction(table, ss.p, J);
	const rates = reactionRates(chemistry, J);
	const reactionRatesPerS: Record<string, number> = {};
	rates.forEach((rho, r) => (reactionRatesPerS[chemistry.reactionIds[r]] = rho));
	const deltaG = Array.from(chemistry.reactionDeltaGkT, (g) => g * table.kT);
	return {
		velocityNmPerS: velocity,
		diffusionNm2PerS: diffusion,
		randomness: scheme.stepSizeNm !== null && velocity !== 0 ? (2 * diffusion) / (Math.abs(velocity) * scheme.stepSizeNm) : null,
		entropyProductionKTPerS: Number.isFinite(sigma) ? sigma : null,
		reactionRatesPerS,
		efficiency: efficiency({ forcePN: scheme.forcePN, velocityNmPerS: velocity, reactionRatesPerS: rates, reactionDeltaGpNnm: deltaG }).value
	};
}

/** All motor observables of a scheme at its own conditions. */
export function observables(scheme: Scheme): Observables {
	const table = effectiveRates(scheme);
	const ss = steadyState(table);
	return observablesOf(scheme, table, ss, chemistryModel(scheme, table.kT), stepFluxes(table, ss.p));
}

/** Mean velocity (nm/s) at an opposing load (pN); the fast path for plotting V against load. */
export function velocityAt(scheme: Scheme, forcePN: number): number {
	const table = effectiveRates(withConditions(scheme, { forcePN }));
	const ss = steadyState(table);
	const J = stepFluxes(table, ss.p);
	let v = 0;
	for (let s = 0; s < table.m; s++) v += J[s] * table.displacementNm[s];
	return v;
}
