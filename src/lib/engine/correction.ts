/**
 * The smallest change of rate constants, in log space, that makes every balanced reversible cycle exactly
 * consistent: minimise Σ (x − x0)²/w over x = ln k subject to C·x = a (one row per basis cycle), i.e.
 * x* = x0 − W⁻¹Cᵀ(C W⁻¹ Cᵀ)⁻¹(C x0 − a).
 *
 * Source: weighted minimum-norm projection [der]; the idea of repairing rate constants on a spanning tree /
 * by linear algebra: Colquhoun et al. 2004, Biophys J 86:3510 [pub]; thermodynamically consistent
 * calibration: Jenkinson & Goutsias 2011, BMC Syst Biol 5:64 [pub].
 * Cost: O(basis² · steps + basis³).
 * Invariants: weights w = relUncertainty² where given, 1 (a factor of e) where not; zero rates and rates
 * with relUncertainty 0 stay fixed; cycles that are unbalanced or irreversible are left alone. Because the
 * basis decides all cycles, the corrected scheme is consistent on every balanced reversible cycle.
 */
import type { CycleJudgement } from './consistency';
import type { Cycle } from './cycles';
import { solveDense } from './dense';
import type { RateTable } from './rates';
import type { Scheme } from './scheme';

export interface RateChange {
	stepId: string;
	rate: 'kForward' | 'kBackward';
	from: number;
	to: number;
	/** to / from */
	factor: number;
}

export interface Correction {
	changes: RateChange[];
	/** basis cycles constrained to exact consistency */
	cyclesConstrained: number;
	/** weighted sum of squared log changes, Σ (Δ ln k)²/w */
	weightedSquaredChange: number;
	weighting: 'uncertainties' | 'uniform';
}

export function proposeCorrection(
	scheme: Scheme,
	table: RateTable,
	basis: readonly Cycle[],
	judgements: readonly CycleJudgement[]
): Correction {
	const m = table.m;
	const variance = new Float64Array(2 * m);
	let anyUncertainty = false;
	scheme.steps.forEach((step, s) => {
		const pairs: [number, number | null][] = [
			[step.kForward, step.relUncertaintyForward],
			[step.kBackward, step.relUncertaintyBackward]
		];
		pairs.forEach(([k, u], side) => {
			if (u !== null) anyUncertainty = true;
			variance[2 * s + side] = k === 0 ? 0 : u === null ? 1 : u * u;
		});
	});
	const rows: { coefficient: Map<number, number>; residual: number }[] = [];
	basis.forEach((cycle, c) => {
		const j = judgements[c];
		if (j.deviationLog10 === null) return;
		const coefficient = new Map<number, number>();
		for (const { step, direction } of cycle.steps) {
			coefficient.set(2 * step, (coefficient.get(2 * step) ?? 0) + direction);
			coefficient.set(2 * step + 1, (coefficient.get(2 * step + 1) ?? 0) - direction);
		}
		rows.push({ coefficient, residual: j.deviationLog10 * Math.LN10 });
	});
	const B = rows.length;
	const G = Array.from({ length: B }, () => new Array<number>(B).fill(0));
	for (let p = 0; p < B; p++)
		for (let q = p; q < B; q++) {
			let t = 0;
			for (const [v, a] of rows[p].coefficient) {
				const b = rows[q].coefficient.get(v);
				if (b) t += a * b * variance[v];
			}
			G[p][q] = G[q][p] = t;
		}
	const y = solveDense(
		G,
		rows.map((r) => r.residual)
	);
	const delta = new Float64Array(2 * m);
	rows.forEach((row, p) => {
		for (const [v, a] of row.coefficient) delta[v] -= variance[v] * a * y[p];
	});
	const changes: RateChange[] = [];
	let weighted = 0;
	for (let v = 0; v < 2 * m; v++) {
		if (Math.abs(delta[v]) < 1e-12) continue;
		weighted += (delta[v] * delta[v]) / variance[v];
		const step = scheme.steps[v >> 1];
		const rate = v & 1 ? 'kBackward' : 'kForward';
		const from = step[rate];
		changes.push({ stepId: step.id, rate, from, to: from * Math.exp(delta[v]), factor: Math.exp(delta[v]) });
	}
	return { changes, cyclesConstrained: B, weightedSquaredChange: weighted, weighting: anyUncertainty ? 'uncertainties' : 'uniform' };
}

/** The scheme with the proposed rate constants. */
export function applyCorrection(scheme: Scheme, correction: Correction): Scheme {
	const byStep = new Map<string, RateChange[]>();
	for (const c of correction.changes) byStep.set(c.stepId, [...(byStep.get(c.stepId) ?? []), c]);
	return {
		...scheme,
		steps: scheme.steps.map((step) => {
			const changes = byStep.get(step.id);
			if (!changes) return step;
			const next = { ...step };
			for (const c of changes) next[c.rate] = c.to;
			return next;
		})
	};
}
