/**
 * Motor observables at steady state: mean velocity V and effective diffusion coefficient D from the tilted
 * generator without eigenvalues or finite differences, randomness, entropy production (step form),
 * turnover rate of each reference reaction, efficiency, and the stall force V(F) = 0.
 *
 * V = p·Q1·1;  Q r = V·1 − Q1·1 with p·r = 0;  D = ½·p·Q2·1 + p·Q1·r  [der], equivalent to the derivatives of
 * the top eigenvalue of the tilted generator (characteristic-polynomial form: Koza 1999, J Phys A 32:7637 [pub]).
 * Randomness 2D/(|V|·δ) (positive for either direction of motion): Svoboda, Mitra & Block 1994, PNAS 91:11782 [pub]. Entropy production
 * Σ_s J_s ln(p_from k+/(p_to k−)): Schnakenberg 1976, Rev Mod Phys 48:571 [pub]. Stall force: Brent 1973,
 * Algorithms for Minimization without Derivatives, ch. 4 [pub].
 * Cost: O(n³) for the GTH factors (shared with the steady state), O(n² + steps) for V, D and the rest;
 * the stall force costs one steady state per Brent iteration.
 * Invariants: the Poisson solve reuses the subtraction-free GTH pivots; entropy production ≥ 0 (null when a
 * zero rate makes it infinite); efficiency is null without load or without chemical driving.
 */
import { chemistryModel, type ChemistryModel } from './chemistry';
import { leastSquares } from './dense';
import { solvePoisson } from './gth';
import { effectiveRates, withConditions, type RateTable } from './rates';
import { EngineError, type Scheme } from './scheme';
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
	let chemicalPower = 0;
	rates.forEach((rho, r) => {
		reactionRatesPerS[chemistry.reactionIds[r]] = rho;
		chemicalPower += rho * -chemistry.reactionDeltaGkT[r] * table.kT;
	});
	const mechanicalPower = scheme.forcePN * velocity;
	return {
		velocityNmPerS: velocity,
		diffusionNm2PerS: diffusion,
		randomness: scheme.stepSizeNm !== null && velocity !== 0 ? (2 * diffusion) / (Math.abs(velocity) * scheme.stepSizeNm) : null,
		entropyProductionKTPerS: Number.isFinite(sigma) ? sigma : null,
		reactionRatesPerS,
		efficiency: scheme.forcePN !== 0 && chemicalPower !== 0 ? mechanicalPower / chemicalPower : null
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

export const STALL_DEFAULTS = {
	/** search bracket in pN; when absent it grows from [0, 1] by doubling up to ±maxForcePN */
	bracketPN: null as [number, number] | null,
	maxForcePN: 1000,
	toleranceForcePN: 1e-9,
	maxIterations: 200
};

/** Relative size below which a velocity is rounding noise against the unloaded one. */
const STALL_NOISE = 1e-12;

/**
 * The load (pN) at which V(F) = 0, by Brent's method on a bracket with a sign change. A scheme with a zero rate on
 * every productive path can never run backwards: its velocity only decays towards zero under load and underflows
 * to 0 (or to noise of either sign) at some large load. That is no stall, so the root is accepted only when the
 * velocity just beyond it runs the other way by more than rounding noise.
 */
export function stallForce(scheme: Scheme, options: Partial<typeof STALL_DEFAULTS> = {}): number {
	const root = bracketedStall(scheme, { ...STALL_DEFAULTS, ...options });
	const unloaded = velocityAt(scheme, 0);
	const beyond = velocityAt(scheme, root + Math.sign(root || 1) * Math.max(0.5, 0.05 * Math.abs(root)));
	if (!(Math.sign(beyond) === -Math.sign(unloaded) && Math.abs(beyond) > STALL_NOISE * Math.abs(unloaded)))
		throw new EngineError(
			'observables',
			`no stall force: the velocity decays to zero near ${root.toPrecision(4)} pN without reversing (an irreversible step: a zero rate on the way back)`
		);
	return root;
}

function bracketedStall(scheme: Scheme, o: typeof STALL_DEFAULTS): number {
	const V = (F: number) => velocityAt(scheme, F);
	let a: number;
	let b: number;
	let fa: number;
	let fb: number;
	if (o.bracketPN) {
		[a, b] = o.bracketPN;
		fa = V(a);
		fb = V(b);
	} else {
		a = 0;
		fa = V(0);
		if (fa === 0) return 0;
		const sign = fa > 0 ? 1 : -1;
		b = sign;
		fb = V(b);
		while (Math.sign(fb) === Math.sign(fa) && Math.abs(b) < o.maxForcePN) {
			a = b;
			fa = fb;
			b *= 2;
			fb = V(b);
			if (!Number.isFinite(fb)) break;
		}
	}
	if (!(Number.isFinite(fa) && Number.isFinite(fb)) || Math.sign(fa) === Math.sign(fb))
		throw new EngineError(
			'observables',
			`no stall force found: the velocity does not change sign between ${a} and ${b} pN; the motor is not driven, or give a wider bracketPN`
		);
	if (fa === 0) return a;
	if (fb === 0) return b;
	// Brent's method (inverse quadratic interpolation with bisection safeguard)
	let c = a;
	let fc = fa;
	let d = b - a;
	let e = d;
	for (let it = 0; it < o.maxIterations; it++) {
		if (Math.sign(fb) === Math.sign(fc)) {
			c = a;
			fc = fa;
			d = e = b - a;
		}
		if (Math.abs(fc) < Math.abs(fb)) {
			a = b;
			b = c;
			c = a;
			fa = fb;
			fb = fc;
			fc = fa;
		}
		const tol = 2 * Number.EPSILON * Math.abs(b) + 0.5 * o.toleranceForcePN;
		const mid = 0.5 * (c - b);
		if (Math.abs(mid) <= tol || fb === 0) return b;
		if (Math.abs(e) >= tol && Math.abs(fa) > Math.abs(fb)) {
			const s = fb / fa;
			let P: number;
			let Qd: number;
			if (a === c) {
				P = 2 * mid * s;
				Qd = 1 - s;
			} else {
				const q = fa / fc;
				const r = fb / fc;
				P = s * (2 * mid * q * (q - r) - (b - a) * (r - 1));
				Qd = (q - 1) * (r - 1) * (s - 1);
			}
			if (P > 0) Qd = -Qd;
			else P = -P;
			if (2 * P < Math.min(3 * mid * Qd - Math.abs(tol * Qd), Math.abs(e * Qd))) {
				e = d;
				d = P / Qd;
			} else {
				d = mid;
				e = d;
			}
		} else {
			d = mid;
			e = d;
		}
		a = b;
		fa = fb;
		b += Math.abs(d) > tol ? d : mid > 0 ? tol : -tol;
		fb = V(b);
	}
	throw new EngineError('observables', `stall force did not converge in ${o.maxIterations} iterations; loosen toleranceForcePN`);
}
