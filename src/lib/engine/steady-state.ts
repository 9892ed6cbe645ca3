/**
 * Steady state of a scheme by the Markov chain tree theorem, computed subtraction-free with GTH elimination:
 * p_i = Σ_i/Σ, with ln Σ kept in log space so that products of hundreds of rates never overflow.
 *
 * Source: Kirchhoff 1847; Tutte's directed matrix-tree theorem; King & Altman 1956, J Phys Chem 60:1375;
 * Hill 1966, J Theor Biol 10:442 [pub]; GTH elimination, Grassmann, Taksar & Heyman 1985 [pub].
 * Cost: O(n³) (zero rates skipped).
 * Invariants: p ≥ 0, Σp = 1 to rounding, every p_i with small relative error; states outside the unique
 * closed class get exactly 0.
 */
import { gthFactor, logTreeSum, stationary, type GthFactor } from './gth';
import { rateMatrix, type RateTable } from './rates';

export interface SteadyState {
	K: Float64Array;
	factor: GthFactor;
	p: Float64Array;
	/** ln Σ, Σ the weight sum of all directed spanning trees */
	logSigma: number;
}

export function steadyState(table: RateTable): SteadyState {
	const K = rateMatrix(table);
	let factor: GthFactor;
	try {
		factor = gthFactor(K, table.n);
	} catch (err) {
		// GTH knows state numbers only; name the states
		if (err instanceof Error) err.message = err.message.replace(/#(\d+)/g, (_, i) => `"${table.stateIds[Number(i)]}"`);
		throw err;
	}
	const p = stationary(factor);
	return { K, factor, p, logSigma: logTreeSum(factor, p) };
}

/** Net flux p_from·k+ − p_to·k− of every step. */
export function stepFluxes(table: RateTable, p: Float64Array): Float64Array {
	const J = new Float64Array(table.m);
	for (let s = 0; s < table.m; s++) J[s] = p[table.from[s]] * table.kPlus[s] - p[table.to[s]] * table.kMinus[s];
	return J;
}
