/**
 * Thermodynamic judgement of one cycle: log10(Π+/Π−) of effective rates against the expectation from the
 * net chemistry and the net displacement, the deviation, its standard uncertainty and the verdict.
 *
 * Source: Kolmogorov's criterion (Kolmogorov 1936, Math Ann 112:155) and the Wegscheider conditions
 * (Wegscheider 1901, Z Phys Chem 39:257) [pub]; with driving ln(Π+/Π−) = −ΔG_cycle/kBT, Hill 1989 and
 * Liepelt & Lipowsky 2007, PRL 98:258102 [pub]. Uncertainty: first-order propagation in log space [trade].
 * Cost: O(cycle length · species) plus one small decomposition per cycle.
 * Invariants: verdict is `unbalanced` when the net exchange is no integer combination of the reference
 * reactions, else `irreversible` when a rate on the cycle is 0, else `consistent` when
 * |deviation| ≤ toleranceLog10 or ≤ sigmaFactor·σ, else `violation`.
 */
import type { ChemistryModel } from './chemistry';
import { decomposeExchange } from './chemistry';
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
	/** integer reaction counts, null when unbalanced */
	reactionCounts: number[] | null;
	displacementNm: number;
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
	// variance of ln k+ + ln k− per step; NaN marks "no uncertainty given"
	const variance = new Float64Array(table.m);
	scheme.steps.forEach((step, s) => {
		const uf = step.relUncertaintyForward;
		const ub = step.relUncertaintyBackward;
		variance[s] = uf === null && ub === null ? NaN : (uf ?? 0) ** 2 + (ub ?? 0) ** 2;
	});
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
			displacementNm: displacement
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
