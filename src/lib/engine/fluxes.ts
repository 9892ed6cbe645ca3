/**
 * Hill's one-way cycle fluxes J±_κ = Π±_κ·Σ_κ/Σ, with Σ_κ = det(L restricted to the states off the cycle)
 * computed subtraction-free (GTH elimination into the cycle's states, the all-minors matrix-tree theorem),
 * and the cycle form of the entropy production.
 *
 * Source: Hill, Free Energy Transduction and Biochemical Cycle Kinetics (Springer 1989) [pub];
 * Chaiken 1982, SIAM J Alg Disc Meth 3:319 [pub]; Schnakenberg 1976, Rev Mod Phys 48:571 [pub].
 * Cost: O(m³ + n²) per cycle, m the number of states off the cycle; an optional work budget stops early.
 * Invariants: J± ≥ 0; ln(J+/J−) = ln(Π+/Π−); the net flux has the sign of ln(Π+/Π−) (expm1, no cancellation); each step's net flux equals the signed sum of the net fluxes of
 * the cycles through it (Hill's flux balance) when every cycle is included.
 */
import type { Cycle } from './cycles';
import { logRestrictedDet, restrictedDetWorkspace } from './gth';

export interface CycleFluxes {
	/** fluxes were computed for cycles 0 … computed−1; the rest are NaN (work budget spent) */
	computed: number;
	forward: Float64Array;
	backward: Float64Array;
	/** net J+ − J−, as J−·expm1(ln Π+ − ln Π−): its sign is that of the affinity, never rounding's */
	net: Float64Array;
	/** ln Σ_κ of each cycle */
	logSigmaCycle: Float64Array;
}

/** `lnForward[c]`, `lnBackward[c]`: ln Π± of each cycle (−Infinity for a zero rate). */
export function cycleFluxes(
	K: Float64Array,
	n: number,
	logSigma: number,
	cycles: readonly Cycle[],
	lnForward: ArrayLike<number>,
	lnBackward: ArrayLike<number>,
	maxWork = Infinity
): CycleFluxes {
	const ws = restrictedDetWorkspace(n);
	const forward = new Float64Array(cycles.length).fill(NaN);
	const backward = new Float64Array(cycles.length).fill(NaN);
	const net = new Float64Array(cycles.length).fill(NaN);
	const logSigmaCycle = new Float64Array(cycles.length).fill(NaN);
	let work = 0;
	let computed = 0;
	for (let c = 0; c < cycles.length; c++) {
		const cycle = cycles[c];
		const off = n - cycle.states.length;
		work += off * off * off + n * n;
		if (work > maxWork) break;
		computed++;
		const logSk = logRestrictedDet(K, n, cycle.states, ws);
		logSigmaCycle[c] = logSk;
		forward[c] = Math.exp(lnForward[c] + logSk - logSigma);
		backward[c] = Math.exp(lnBackward[c] + logSk - logSigma);
		net[c] =
			lnBackward[c] === -Infinity
				? forward[c]
				: lnForward[c] === -Infinity
					? -backward[c]
					: backward[c] * Math.expm1(lnForward[c] - lnBackward[c]);
	}
	return { computed, forward, backward, net, logSigmaCycle };
}

/** Σ_κ J_κ·ln(Π+_κ/Π−_κ) in kB per second, ≥ 0 term by term; Infinity when a cycle with flux is irreversible. */
export function cycleEntropyProduction(fluxes: CycleFluxes, lnForward: ArrayLike<number>, lnBackward: ArrayLike<number>): number {
	let sigma = 0;
	for (let c = 0; c < fluxes.computed; c++) {
		const J = fluxes.net[c];
		if (J === 0) continue;
		sigma += J * (lnForward[c] - lnBackward[c]);
	}
	return sigma;
}
