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
 * Accuracy: the step net fluxes come from steady-state.ts (error relative to each flux); the displacements are moved
 * onto the chords of its spanning tree (a gauge change of position that leaves V and D unchanged [der]), so the fast
 * steps of the tree, whose one-way fluxes cancel, never enter the sums for V and D.
 * Cost: O(n³) for the GTH factors (shared with the steady state), O(n² + steps) for V, D and the rest.
 * Invariants: the Poisson solve reuses the subtraction-free GTH pivots; V zero within its error (and the rates'
 * resolution) is exactly 0, randomness is then null with the reason; D ≥ 0; entropy production ≥ 0 term by term
 * (null when a zero rate makes it infinite); efficiency in [0, 1] or null (efficiency.ts).
 */
import { chemistryModel, type ChemistryModel } from './chemistry';
import { leastSquares } from './dense';
import { efficiency } from './efficiency';
import { solvePoisson } from './gth';
import { effectiveRates, withConditions, type RateTable } from './rates';
import type { Scheme } from './scheme';
import { steadyState, stepFlows, type SteadyState, type StepFlows } from './steady-state';

export interface Observables {
	velocityNmPerS: number;
	diffusionNm2PerS: number;
	randomness: number | null;
	/** why randomness is null (no step size, or V zero within its error); null when it is given */
	randomnessReason: string | null;
	entropyProductionKTPerS: number | null;
	reactionRatesPerS: Record<string, number>;
	efficiency: number | null;
	/** estimated relative errors of V, D (null where the value is 0) and the worst of the step net fluxes */
	accuracy: MotionAccuracy;
}

export interface MotionAccuracy {
	velocityRelError: number | null;
	diffusionRelError: number | null;
	netFluxRelError: number;
}

export interface Motion {
	velocity: number;
	diffusion: number;
	/** estimated absolute errors */
	velocityError: number;
	diffusionError: number;
}

const EPS = Number.EPSILON / 2;
/** A cycle displacement this small against the displacements it is summed from is rounding of decimal inputs. */
const DISPLACEMENT_NOISE = 1e-12;

/**
 * Displacements moved off the spanning tree: d'_s = d_s + φ_to − φ_from with φ chosen so that every tree step gets
 * d' = 0. Position then differs from the original one by the bounded φ of the current state, so V and D are the same
 * [der]; but the fast steps of the tree (rapid equilibria, dead ends) no longer enter the sums, so the one-way fluxes
 * that cancel are never summed.
 */
function chordDisplacements(table: RateTable, flows: StepFlows): Float64Array {
	const { n, m, from, to, displacementNm } = table;
	const phi = new Float64Array(n);
	const phiMag = new Float64Array(n);
	for (let k = 1; k < n; k++) {
		const v = flows.treeOrder[k];
		const s = flows.parentStep[v];
		const w = flows.parent[v];
		phi[v] = from[s] === v ? phi[w] + displacementNm[s] : phi[w] - displacementNm[s];
		phiMag[v] = phiMag[w] + Math.abs(displacementNm[s]);
	}
	const d = new Float64Array(m);
	for (let s = 0; s < m; s++) {
		if (flows.inTree[s]) continue;
		const x = displacementNm[s] + phi[to[s]] - phi[from[s]];
		const scale = Math.abs(displacementNm[s]) + phiMag[to[s]] + phiMag[from[s]];
		d[s] = Math.abs(x) <= DISPLACEMENT_NOISE * scale ? 0 : x;
	}
	return d;
}

/**
 * V = Σ J_s·d'_s over the chords with its estimated error. V is 0 when it is zero within that error plus the
 * resolution of the rates themselves: rounding a rate to a double (relative ε) moves a cycle's net flux by up to about
 * 2·(cycle length)·ε times its one-way flux [der], so a smaller V cannot be told from 0 (detailed balance).
 */
function chordVelocity(n: number, flows: StepFlows, d: Float64Array): { velocity: number; velocityError: number } {
	const { net, netAbsError, forward, backward } = flows;
	let velocity = 0;
	let terms = 0;
	let velocityError = 0;
	let resolution = 0;
	for (let s = 0; s < d.length; s++) {
		if (d[s] === 0) continue;
		velocity += net[s] * d[s];
		terms += Math.abs(net[s] * d[s]);
		velocityError += netAbsError[s] * Math.abs(d[s]);
		resolution += 2 * n * EPS * (forward[s] + backward[s]) * Math.abs(d[s]);
	}
	velocityError += 2 * d.length * EPS * terms;
	return { velocity: Math.abs(velocity) <= velocityError + resolution ? 0 : velocity, velocityError };
}

/**
 * V and D of a steady state, with estimated absolute errors. V = Σ J_s·d'_s over the chords; D = ½·p·Q2·1 + p·Q1·r
 * with the chord displacements d'. V zero within its error is returned as 0, D is never negative.
 */
export function velocityAndDiffusion(table: RateTable, ss: SteadyState, flows: StepFlows = stepFlows(table, ss)): Motion {
	const { n, m, from, to, kPlus, kMinus } = table;
	const { p } = ss;
	const d = chordDisplacements(table, flows);
	const { forward, backward } = flows;
	const { velocity, velocityError } = chordVelocity(n, flows, d);
	// (Q1·1)_i: out-rates of i weighted by displacement
	const q1 = new Float64Array(n);
	let half2 = 0;
	for (let s = 0; s < m; s++) {
		const ds = d[s];
		if (ds === 0) continue;
		q1[from[s]] += kPlus[s] * ds;
		q1[to[s]] -= kMinus[s] * ds;
		half2 += 0.5 * (forward[s] + backward[s]) * ds * ds;
	}
	// L r = Q1·1 − V·1 (L = −Q), then centre so that p·r = 0
	const c = new Float64Array(n);
	for (let i = 0; i < n; i++) c[i] = q1[i] - velocity;
	const r = solvePoisson(ss.factor, c);
	let shift = 0;
	for (let i = 0; i < n; i++) shift += p[i] * r[i];
	let cross = 0;
	let crossTerms = 0;
	for (let s = 0; s < m; s++) {
		const ds = d[s];
		if (ds === 0) continue;
		const up = forward[s] * ds * (r[to[s]] - shift);
		const down = backward[s] * ds * (r[from[s]] - shift);
		cross += up - down;
		crossTerms += Math.abs(up) + Math.abs(down);
	}
	const diffusionError = 8 * n * EPS * (half2 + crossTerms);
	return { velocity, diffusion: Math.max(0, half2 + cross), velocityError, diffusionError };
}

/** ln(A/B) for A = B + J, B = p_to·k−: log1p keeps the sign of J, so every term J·ln(A/B) is ≥ 0 [der]. */
function stepAffinity(J: number, A: number, B: number): number {
	if (J === 0) return 0;
	if (J > 0) return B === 0 ? Infinity : Math.log1p(J / B);
	return A === 0 ? -Infinity : -Math.log1p(-J / A);
}

/**
 * Step form of the entropy production, kB/s, ≥ 0 by construction (each term J·ln(A/B) has the sign of J twice);
 * Infinity when a step with net flux has a zero rate.
 */
export function entropyProduction(table: RateTable, ss: SteadyState, flows: StepFlows = stepFlows(table, ss)): number {
	let sigma = 0;
	for (let s = 0; s < table.m; s++) {
		const J = flows.net[s];
		if (J === 0) continue;
		let x: number;
		if (ss.logScale) {
			const lnUp = ss.logP[table.from[s]] + table.lnPlus[s];
			const lnDown = ss.logP[table.to[s]] + table.lnMinus[s];
			x = Math.sign(lnUp - lnDown) === Math.sign(J) ? lnUp - lnDown : 0;
		} else x = stepAffinity(J, flows.forward[s], flows.backward[s]);
		sigma += J * x;
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
	flows: StepFlows = stepFlows(table, ss)
): Observables {
	const J = flows.net;
	const motion = velocityAndDiffusion(table, ss, flows);
	const { velocity, diffusion } = motion;
	const sigma = entropyProduction(table, ss, flows);
	const rates = reactionRates(chemistry, J);
	const reactionRatesPerS: Record<string, number> = {};
	rates.forEach((rho, r) => (reactionRatesPerS[chemistry.reactionIds[r]] = rho));
	const deltaG = Array.from(chemistry.reactionDeltaGkT, (g) => g * table.kT);
	const randomnessReason =
		scheme.stepSizeNm === null
			? 'no step size δ is given (stepSizeNm)'
			: velocity === 0
				? 'the mean velocity is zero within its error, so 2D/(V·δ) has no value'
				: null;
	return {
		velocityNmPerS: velocity,
		diffusionNm2PerS: diffusion,
		randomness: randomnessReason === null ? (2 * diffusion) / (Math.abs(velocity) * scheme.stepSizeNm!) : null,
		randomnessReason,
		entropyProductionKTPerS: Number.isFinite(sigma) ? sigma : null,
		reactionRatesPerS,
		efficiency: efficiency({ forcePN: scheme.forcePN, velocityNmPerS: velocity, reactionRatesPerS: rates, reactionDeltaGpNnm: deltaG }).value,
		accuracy: {
			velocityRelError: velocity === 0 ? null : motion.velocityError / Math.abs(velocity),
			diffusionRelError: diffusion === 0 ? null : motion.diffusionError / diffusion,
			netFluxRelError: flows.netRelError
		}
	};
}

/** All motor observables of a scheme at its own conditions. */
export function observables(scheme: Scheme): Observables {
	const table = effectiveRates(scheme);
	const ss = steadyState(table);
	return observablesOf(scheme, table, ss, chemistryModel(scheme, table.kT));
}

/**
 * V of a steady state with its estimated absolute error (computation only; V within the rates' own resolution is
 * already 0), without D's Poisson solve: for searches over load that need the sign of V and how far to trust it.
 */
export function velocityWithError(table: RateTable, ss: SteadyState): { velocity: number; velocityError: number } {
	const flows = stepFlows(table, ss);
	return chordVelocity(table.n, flows, chordDisplacements(table, flows));
}

/** Mean velocity (nm/s) at an opposing load (pN); the fast path for plotting V against load. */
export function velocityAt(scheme: Scheme, forcePN: number): number {
	const table = effectiveRates(withConditions(scheme, { forcePN }));
	return velocityWithError(table, steadyState(table)).velocity;
}
