/**
 * The chemistry of a scheme: which species each step exchanges with solution, the reference reactions as a
 * stoichiometric matrix, their free energies at the scheme's conditions, and the expression of a net
 * exchange as an integer combination of reference reactions.
 *
 * Source: Hill, Free Energy Transduction and Biochemical Cycle Kinetics (Springer 1989) [pub];
 * ΔG_r = ΔG°'_r + RT·Σ ν_rx ln c_x (standard biochemical thermodynamics) [trade].
 * Cost: O(steps·species) to build; O(species·reactions² + reactions³) per decomposition.
 * Invariants: exchange vectors count species released to solution positively, taken up negatively, for the
 * forward direction of a step; a decomposition is returned only when it is integral and reproduces the
 * exchange exactly (to 1e-9).
 */
import { leastSquares } from './dense';
import type { Scheme } from './scheme';
import { kJPerMolToPNnm } from './units';

export interface ChemistryModel {
	species: string[];
	speciesIndex: Map<string, number>;
	reactionIds: string[];
	/** stoichiometry rows per species: S[x][r] */
	S: number[][];
	/** exchange of each step (forward direction), row-major steps × species */
	stepExchange: Float64Array;
	/** ΔG_r / kBT at the scheme's conditions */
	reactionDeltaGkT: Float64Array;
	/** least-squares solver of S·n = v, row-major reactions × species (built once: exchanges are many) */
	pseudoInverse: Float64Array;
}

export function chemistryModel(scheme: Scheme, kT: number): ChemistryModel {
	const species = [
		...new Set([
			...Object.keys(scheme.concentrationsM),
			...scheme.reactions.flatMap((r) => Object.keys(r.stoichiometry)),
			...scheme.steps.flatMap((s) => [...s.binds, ...s.releases])
		])
	];
	const speciesIndex = new Map(species.map((x, i) => [x, i]));
	const X = species.length;
	const S = species.map((x) => scheme.reactions.map((r) => r.stoichiometry[x] ?? 0));
	const stepExchange = new Float64Array(scheme.steps.length * X);
	scheme.steps.forEach((step, s) => {
		for (const x of step.binds) stepExchange[s * X + speciesIndex.get(x)!] -= 1;
		for (const x of step.releases) stepExchange[s * X + speciesIndex.get(x)!] += 1;
	});
	const reactionDeltaGkT = new Float64Array(
		scheme.reactions.map((r) => {
			let g = kJPerMolToPNnm(r.deltaG0kJPerMol) / kT;
			for (const [x, nu] of Object.entries(r.stoichiometry)) g += nu * Math.log(scheme.concentrationsM[x]);
			return g;
		})
	);
	const R = scheme.reactions.length;
	const pseudoInverse = new Float64Array(R * X);
	if (R > 0)
		for (let x = 0; x < X; x++) {
			const unit = new Array<number>(X).fill(0);
			unit[x] = 1;
			leastSquares(S, unit).forEach((v, r) => (pseudoInverse[r * X + x] = v));
		}
	return { species, speciesIndex, reactionIds: scheme.reactions.map((r) => r.id), S, stepExchange, reactionDeltaGkT, pseudoInverse };
}

/** Integer coefficients n with S·n = exchange, or null when there are none (an unbalanced exchange). */
export function decomposeExchange(model: ChemistryModel, exchange: ArrayLike<number>): number[] | null {
	const R = model.reactionIds.length;
	let nonzero = false;
	for (let x = 0; x < exchange.length; x++) if (exchange[x] !== 0) nonzero = true;
	if (!nonzero) return new Array<number>(R).fill(0);
	if (R === 0) return null;
	const X = exchange.length;
	const n = new Array<number>(R);
	for (let r = 0; r < R; r++) {
		let t = 0;
		for (let x = 0; x < X; x++) t += model.pseudoInverse[r * X + x] * exchange[x];
		n[r] = Math.round(t);
	}
	for (let x = 0; x < X; x++) {
		let t = 0;
		for (let r = 0; r < R; r++) t += model.S[x][r] * n[r];
		if (Math.abs(t - exchange[x]) > 1e-9) return null;
	}
	return n;
}
