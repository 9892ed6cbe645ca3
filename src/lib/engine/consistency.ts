/**
 * Thermodynamic judgement of one cycle: log10(Π+/Π−) of effective rates against the expectation from the
 * net chemistry and the net displacement, the deviation, its standard uncertainty and the verdict.
 *
 * Source: Kolmogorov's criterion (Kolmogorov 1936, Math Ann 112:155) and the Wegscheider conditions
 * (Wegscheider 1901, Z Phys Chem 39:257) [pub]; with driving ln(Π+/Π−) = −ΔG_cycle/kBT, Hill 1989 and
 * Liepelt & Lipowsky 2007, PRL 98:258102 [pub]. Uncertainty: first-order propagation in log space [trade].
 * Cost: O(cycle length · species) plus one small decomposition per cycle.
 * Invariants: verdict is `unbalanced` when the net exchange is no rational combination of the reference
 * reactions, else `irreversible` when a rate on the cycle is 0, else `consistent` when
 * |deviation| ≤ toleranceLog10 or ≤ sigmaFactor·σ, else `violation`.
 *
 * `checkBasis` turns a cycle basis into a basis of the reversible balanced cycles: the balanced reversible
 * basis cycles plus, exactly (rational null space, fraction.js), the balanced combinations of the unbalanced
 * ones. Deviations are linear on cycle space, so any reversible balanced cycle deviates by at most the sum of
 * their |deviations| (its coordinates on the unbalanced part are ±1 or 0 on the free columns) [der].
 */
import Fraction from 'fraction.js';
import type { ChemistryModel } from './chemistry';
import { decomposeExchange, exchangeFreeEnergyKT } from './chemistry';
import type { Cycle } from './cycles';
import type { RateTable } from './rates';
import type { Scheme } from './scheme';

export type Verdict = 'consistent' | 'violation' | 'irreversible' | 'unbalanced';

export const CONSISTENCY_DEFAULTS = {
	/** allowed |log10(Π+/Π−) − expected| */
	toleranceLog10: 0.01,
	/** a deviation within this many standard uncertainties is also consistent */
	sigmaFactor: 2
};

export interface CycleJudgement {
	/** ln Π+ and ln Π− of effective rates (−Infinity for a zero rate on the cycle) */
	lnForward: number;
	lnBackward: number;
	log10RateRatio: number | null;
	expectedLog10: number | null;
	deviationLog10: number | null;
	sigmaLog10: number | null;
	verdict: Verdict;
	/** rational reaction counts (one per listed reaction), null when unbalanced */
	reactionCounts: number[] | null;
	displacementNm: number;
	/** net exchange of each species with solution along the cycle (chemistry.species order) */
	exchange: Float64Array;
}

/** Variance of ln k+ − ln k− per step from the stated uncertainties; NaN marks "no uncertainty given". */
function stepVariance(scheme: Scheme): Float64Array {
	const variance = new Float64Array(scheme.steps.length);
	scheme.steps.forEach((step, s) => {
		const uf = step.relUncertaintyForward;
		const ub = step.relUncertaintyBackward;
		variance[s] = uf === null && ub === null ? NaN : (uf ?? 0) ** 2 + (ub ?? 0) ** 2;
	});
	return variance;
}

/** A judge for many cycles of one scheme: per-step data gathered once into typed arrays. */
export function cycleJudge(
	table: RateTable,
	chemistry: ChemistryModel,
	scheme: Scheme,
	options: Partial<typeof CONSISTENCY_DEFAULTS> = {}
): (cycle: Cycle) => CycleJudgement {
	const toleranceLog10 = options.toleranceLog10 ?? CONSISTENCY_DEFAULTS.toleranceLog10;
	const sigmaFactor = options.sigmaFactor ?? CONSISTENCY_DEFAULTS.sigmaFactor;
	const X = chemistry.species.length;
	const variance = stepVariance(scheme);
	const { lnPlus, lnMinus, displacementNm } = table;
	const exchangeOf = chemistry.stepExchange;
	const kT = table.kT;
	const force = scheme.forcePN;
	const LN10 = Math.LN10;
	return (cycle) => {
		const exchange = new Float64Array(X);
		let lnForward = 0;
		let lnBackward = 0;
		let displacement = 0;
		let total = 0;
		let anyUncertainty = false;
		for (const { step, direction } of cycle.steps) {
			if (direction === 1) {
				lnForward += lnPlus[step];
				lnBackward += lnMinus[step];
			} else {
				lnForward += lnMinus[step];
				lnBackward += lnPlus[step];
			}
			displacement += direction * displacementNm[step];
			for (let x = 0; x < X; x++) exchange[x] += direction * exchangeOf[step * X + x];
			const v = variance[step];
			if (v === v) {
				anyUncertainty = true;
				total += v;
			}
		}
		const counts = decomposeExchange(chemistry, exchange);
		const reversible = Number.isFinite(lnForward) && Number.isFinite(lnBackward);
		const log10RateRatio = reversible ? (lnForward - lnBackward) / LN10 : null;
		let expectedLog10: number | null = null;
		if (counts) {
			let deltaG = (force * displacement) / kT;
			for (let r = 0; r < counts.length; r++) deltaG += counts[r] * chemistry.reactionDeltaGkT[r];
			expectedLog10 = -deltaG / LN10;
		}
		const deviationLog10 = log10RateRatio !== null && expectedLog10 !== null ? log10RateRatio - expectedLog10 : null;
		const sigmaLog10 = anyUncertainty ? Math.sqrt(total) / LN10 : null;
		let verdict: Verdict;
		if (!counts) verdict = 'unbalanced';
		else if (!reversible) verdict = 'irreversible';
		else {
			const dev = Math.abs(deviationLog10!);
			verdict = dev <= toleranceLog10 || (sigmaLog10 !== null && dev <= sigmaFactor * sigmaLog10) ? 'consistent' : 'violation';
		}
		return {
			lnForward,
			lnBackward,
			log10RateRatio,
			expectedLog10,
			deviationLog10,
			sigmaLog10,
			verdict,
			reactionCounts: counts,
			displacementNm: displacement,
			exchange
		};
	};
}

/** Judges one cycle (for many, build a `cycleJudge` once). */
export function judgeCycle(
	cycle: Cycle,
	table: RateTable,
	chemistry: ChemistryModel,
	scheme: Scheme,
	options: Partial<typeof CONSISTENCY_DEFAULTS> = {}
): CycleJudgement {
	return cycleJudge(table, chemistry, scheme, options)(cycle);
}

/** One independent condition of consistency: a basis cycle, or a balanced combination of basis cycles. */
export interface ConsistencyCondition {
	/** indices into the basis and their (rational) coefficients; one entry with coefficient 1 for a basis cycle */
	basisCycles: number[];
	coefficients: number[];
	/** net number of forward traversals of each step (step index → coefficient) */
	stepCoefficients: Map<number, number>;
	deviationLog10: number;
	sigmaLog10: number | null;
	verdict: 'consistent' | 'violation';
}

export interface BasisCheck {
	/** a basis of the reversible balanced cycles: every such cycle is a combination of these */
	conditions: ConsistencyCondition[];
	/** Σ |deviation| over the conditions: no reversible balanced cycle deviates by more */
	deviationBoundLog10: number;
	/** basis cycles through a zero rate, and reversible basis cycles with unbalanced chemistry */
	irreversible: number;
	unbalanced: number;
	/** balanced combinations of unbalanced basis cycles among the conditions */
	combinations: number;
}

/**
 * The conditions that decide every reversible balanced cycle, from a basis whose reversible cycles use only
 * reversible steps (build it with `cycleBasis(g, preference)`, reversible steps first).
 */
export function checkBasis(
	basis: readonly Cycle[],
	judgements: readonly CycleJudgement[],
	table: RateTable,
	chemistry: ChemistryModel,
	scheme: Scheme,
	options: Partial<typeof CONSISTENCY_DEFAULTS> = {}
): BasisCheck {
	const toleranceLog10 = options.toleranceLog10 ?? CONSISTENCY_DEFAULTS.toleranceLog10;
	const sigmaFactor = options.sigmaFactor ?? CONSISTENCY_DEFAULTS.sigmaFactor;
	const variance = stepVariance(scheme);
	const X = chemistry.species.length;
	const conditions: ConsistencyCondition[] = [];
	const stepCoefficientsOf = (cycle: Cycle, into = new Map<number, number>(), factor = 1) => {
		for (const { step, direction } of cycle.steps) into.set(step, (into.get(step) ?? 0) + factor * direction);
		return into;
	};
	const sigmaOf = (coefficients: Map<number, number>) => {
		let total = 0;
		let any = false;
		for (const [s, a] of coefficients) {
			const v = variance[s];
			if (v === v && a !== 0) {
				any = true;
				total += a * a * v;
			}
		}
		return any ? Math.sqrt(total) / Math.LN10 : null;
	};
	const verdictOf = (deviation: number, sigma: number | null) =>
		Math.abs(deviation) <= toleranceLog10 || (sigma !== null && Math.abs(deviation) <= sigmaFactor * sigma) ? 'consistent' : 'violation';

	let irreversible = 0;
	const unbalanced: number[] = [];
	judgements.forEach((j, b) => {
		if (j.verdict === 'irreversible' || j.log10RateRatio === null) irreversible++;
		else if (j.verdict === 'unbalanced') unbalanced.push(b);
		else
			conditions.push({
				basisCycles: [b],
				coefficients: [1],
				stepCoefficients: stepCoefficientsOf(basis[b]),
				deviationLog10: j.deviationLog10!,
				sigmaLog10: j.sigmaLog10,
				verdict: j.verdict
			});
	});

	// balanced combinations of the unbalanced basis cycles: the null space of their unbalanced parts
	let combinations = 0;
	if (unbalanced.length > 1 && chemistry.balanceRows > 0) {
		const rows = chemistry.balanceRows;
		const Q: Fraction[][] = Array.from({ length: rows }, (_, q) =>
			unbalanced.map((b) => {
				let t = 0;
				for (let x = 0; x < X; x++) t += chemistry.balanceCheck[q * X + x] * judgements[b].exchange[x];
				return new Fraction(t);
			})
		);
		const U = unbalanced.length;
		const pivotColumn: number[] = [];
		let r = 0;
		for (let c = 0; c < U && r < rows; c++) {
			let p = -1;
			for (let i = r; i < rows && p < 0; i++) if (Q[i][c].valueOf() !== 0) p = i;
			if (p < 0) continue;
			[Q[r], Q[p]] = [Q[p], Q[r]];
			const inv = Q[r][c].inverse();
			Q[r] = Q[r].map((v) => v.mul(inv));
			for (let i = 0; i < rows; i++) {
				if (i === r || Q[i][c].valueOf() === 0) continue;
				const f = Q[i][c];
				Q[i] = Q[i].map((v, k) => v.sub(f.mul(Q[r][k])));
			}
			pivotColumn[r++] = c;
		}
		const isPivot = new Set(pivotColumn);
		// the linearly extended deviation of each unbalanced cycle; sums of them over a balanced combination are exact
		const extended = (b: number) => {
			const j = judgements[b];
			const expected = -((scheme.forcePN * j.displacementNm) / table.kT + exchangeFreeEnergyKT(chemistry, j.exchange)) / Math.LN10;
			return j.log10RateRatio! - expected;
		};
		for (let f = 0; f < U; f++) {
			if (isPivot.has(f)) continue;
			const members = [unbalanced[f]];
			const coefficients = [1];
			for (let i = 0; i < r; i++) {
				const a = Q[i][f].neg().valueOf();
				if (a !== 0) {
					members.push(unbalanced[pivotColumn[i]]);
					coefficients.push(a);
				}
			}
			const stepCoefficients = new Map<number, number>();
			let deviation = 0;
			members.forEach((b, k) => {
				stepCoefficientsOf(basis[b], stepCoefficients, coefficients[k]);
				deviation += coefficients[k] * extended(b);
			});
			const sigma = sigmaOf(stepCoefficients);
			conditions.push({ basisCycles: members, coefficients, stepCoefficients, deviationLog10: deviation, sigmaLog10: sigma, verdict: verdictOf(deviation, sigma) });
			combinations++;
		}
	}
	let bound = 0;
	for (const c of conditions) bound += Math.abs(c.deviationLog10);
	return { conditions, deviationBoundLog10: bound, irreversible, unbalanced: unbalanced.length, combinations };
}
