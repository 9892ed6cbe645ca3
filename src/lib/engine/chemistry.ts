/**
 * The chemistry of a scheme: which species each step exchanges with solution, the reference reactions as a
 * stoichiometric matrix, their free energies at the scheme's conditions, and the expression of a net
 * exchange as a rational combination of reference reactions.
 *
 * Source: Hill, Free Energy Transduction and Biochemical Cycle Kinetics (Springer 1989) [pub];
 * ΔG_r = ΔG°'_r + RT·Σ ν_rx ln c_x (standard biochemical thermodynamics) [trade]; exact rational Gauss–Jordan
 * elimination (Golub & Van Loan 2013, §3.2) [pub] with fraction.js.
 * Cost: O(species² · (reactions + species)) rational operations to build, once per scheme; O(species ·
 * reactions) floating-point operations per decomposition (the rational work is folded into integer rows).
 * Invariants: exchange vectors count species released to solution positively, taken up negatively, for the
 * forward direction of a step. Exchanges are expressed in an independent set of reference reactions chosen
 * in a canonical order (fewest species, then smallest total stoichiometry, then id), so no result depends on
 * the order in which reactions are listed; an exchange is balanced exactly when it lies in their span (checked
 * in exact integer arithmetic). A dependent reaction whose ΔG°' differs from that of the combination with its
 * stoichiometry is reported in `contradictions`.
 */
import Fraction from 'fraction.js';
import type { Scheme } from './scheme';
import { kJPerMolToPNnm } from './units';

export interface ReactionContradiction {
	/** the dependent reaction */
	reaction: string;
	/** the independent reactions with the same stoichiometry, with their (rational) coefficients */
	combination: Record<string, number>;
	deltaG0kJPerMol: number;
	/** ΔG°' of the combination */
	combinedDeltaG0kJPerMol: number;
}

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
	/** the independent reactions exchanges are expressed in (indices into reactionIds), in canonical order */
	basisReactions: number[];
	/**
	 * integer rows (basisReactions × species) and their divisors: the coefficient of basis reaction p in a
	 * balanced exchange E is (Σ_x leftInverse[p·X + x]·E_x) / leftInverseDivisor[p]
	 */
	leftInverse: Float64Array;
	leftInverseDivisor: Float64Array;
	/** integer rows (balanceRows × species) spanning the left null space: E is balanced iff every row·E = 0 */
	balanceCheck: Float64Array;
	balanceRows: number;
	contradictions: ReactionContradiction[];
}

const gcd = (a: bigint, b: bigint): bigint => {
	a = a < 0n ? -a : a;
	b = b < 0n ? -b : b;
	while (b) [a, b] = [b, a % b];
	return a;
};

/** A row of fractions scaled to the smallest integers with the same ratios, and the scale used. */
function integerRow(row: Fraction[]): { values: number[]; scale: Fraction } {
	let lcm = 1n;
	for (const f of row) if (f.n !== 0n) lcm = (lcm / gcd(lcm, f.d)) * f.d;
	let common = 0n;
	for (const f of row) common = gcd(common, (f.n * lcm) / f.d);
	if (common === 0n) common = 1n;
	const scale = new Fraction(lcm).div(new Fraction(common));
	return { values: row.map((f) => Number(f.mul(scale).valueOf())), scale };
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
	const R = scheme.reactions.length;
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

	// canonical order: the simplest reactions first, so that "2 ATP → …" is expressed through "ATP → …"
	const size = (r: number) => {
		let count = 0;
		let total = 0;
		for (const nu of Object.values(scheme.reactions[r].stoichiometry))
			if (nu !== 0) {
				count++;
				total += Math.abs(nu);
			}
		return [count, total] as const;
	};
	const order = [...Array(R).keys()].sort((a, b) => {
		const [ca, ta] = size(a);
		const [cb, tb] = size(b);
		const ia = scheme.reactions[a].id;
		const ib = scheme.reactions[b].id;
		return ca - cb || ta - tb || (ia < ib ? -1 : ia > ib ? 1 : 0);
	});

	// Gauss–Jordan on [S(order) | I]: pivots pick the independent reactions greedily in canonical order; the
	// right block then holds a left inverse (pivot rows) and the left null space (the other rows).
	const zero = new Fraction(0);
	const M: Fraction[][] = species.map((_, x) => [
		...order.map((r) => new Fraction(S[x][r])),
		...species.map((__, y) => new Fraction(x === y ? 1 : 0))
	]);
	const pivotOf: number[] = []; // pivotOf[row] = column (position in `order`)
	let row = 0;
	for (let c = 0; c < R && row < X; c++) {
		let p = -1;
		for (let i = row; i < X; i++) if (!M[i][c].equals(zero)) p = p < 0 ? i : p;
		if (p < 0) continue;
		[M[row], M[p]] = [M[p], M[row]];
		const inv = M[row][c].inverse();
		M[row] = M[row].map((v) => v.mul(inv));
		for (let i = 0; i < X; i++) {
			if (i === row || M[i][c].equals(zero)) continue;
			const f = M[i][c];
			M[i] = M[i].map((v, j) => v.sub(f.mul(M[row][j])));
		}
		pivotOf[row++] = c;
	}
	const rank = row;
	const basisReactions = pivotOf.map((c) => order[c]);
	const leftInverse = new Float64Array(rank * X);
	const leftInverseDivisor = new Float64Array(rank);
	for (let p = 0; p < rank; p++) {
		const { values, scale } = integerRow(M[p].slice(R));
		values.forEach((v, x) => (leftInverse[p * X + x] = v));
		leftInverseDivisor[p] = Number(scale.valueOf());
	}
	const balanceRows = X - rank;
	const balanceCheck = new Float64Array(balanceRows * X);
	for (let q = 0; q < balanceRows; q++) integerRow(M[rank + q].slice(R)).values.forEach((v, x) => (balanceCheck[q * X + x] = v));

	// a dependent reaction is the combination in its column of the reduced matrix; its ΔG°' must agree
	const contradictions: ReactionContradiction[] = [];
	const pivotColumns = new Set(pivotOf);
	for (let c = 0; c < R; c++) {
		if (pivotColumns.has(c)) continue;
		const reaction = scheme.reactions[order[c]];
		const combination: Record<string, number> = {};
		let combined = 0;
		let magnitude = Math.abs(reaction.deltaG0kJPerMol);
		for (let p = 0; p < rank; p++) {
			const coefficient = Number(M[p][c].valueOf());
			if (coefficient === 0) continue;
			const base = scheme.reactions[basisReactions[p]];
			combination[base.id] = coefficient;
			combined += coefficient * base.deltaG0kJPerMol;
			magnitude += Math.abs(coefficient * base.deltaG0kJPerMol);
		}
		if (Math.abs(combined - reaction.deltaG0kJPerMol) > 1e-9 * magnitude + 1e-12)
			contradictions.push({ reaction: reaction.id, combination, deltaG0kJPerMol: reaction.deltaG0kJPerMol, combinedDeltaG0kJPerMol: combined });
	}
	return {
		species,
		speciesIndex,
		reactionIds: scheme.reactions.map((r) => r.id),
		S,
		stepExchange,
		reactionDeltaGkT,
		basisReactions,
		leftInverse,
		leftInverseDivisor,
		balanceCheck,
		balanceRows,
		contradictions
	};
}

/** True when the exchange (integer counts) is a combination of the reference reactions. */
export function isBalanced(model: ChemistryModel, exchange: ArrayLike<number>): boolean {
	const X = exchange.length;
	for (let q = 0; q < model.balanceRows; q++) {
		let t = 0;
		for (let x = 0; x < X; x++) t += model.balanceCheck[q * X + x] * exchange[x];
		if (t !== 0) return false;
	}
	return true;
}

/**
 * ΔG / kBT of the chemistry of an exchange, Σ_p n_p·ΔG_p with n = left inverse · exchange. For a balanced
 * exchange this is its free energy; for any other it is a fixed linear extension, so that sums over cycles
 * stay sums.
 */
export function exchangeFreeEnergyKT(model: ChemistryModel, exchange: ArrayLike<number>): number {
	const X = exchange.length;
	let g = 0;
	for (let p = 0; p < model.basisReactions.length; p++) {
		let t = 0;
		for (let x = 0; x < X; x++) t += model.leftInverse[p * X + x] * exchange[x];
		if (t !== 0) g += (t / model.leftInverseDivisor[p]) * model.reactionDeltaGkT[model.basisReactions[p]];
	}
	return g;
}

/**
 * Rational coefficients n (one per listed reaction, 0 for the dependent ones) with S·n = exchange, or null
 * when there are none (an unbalanced exchange).
 */
export function decomposeExchange(model: ChemistryModel, exchange: ArrayLike<number>): number[] | null {
	const R = model.reactionIds.length;
	if (!isBalanced(model, exchange)) return null;
	const X = exchange.length;
	const n = new Array<number>(R).fill(0);
	for (let p = 0; p < model.basisReactions.length; p++) {
		let t = 0;
		for (let x = 0; x < X; x++) t += model.leftInverse[p * X + x] * exchange[x];
		// integer numerator over an integer divisor: the coefficient is the correctly rounded rational
		n[model.basisReactions[p]] = t === 0 ? 0 : t / model.leftInverseDivisor[p];
	}
	return n;
}
