/**
 * The smallest change of rate constants, in log space, that makes every reversible balanced cycle exactly
 * consistent: minimise Σ (x − x0)²/w over x = ln k subject to C·x = a (one row per independent condition:
 * the reversible balanced basis cycles and the balanced combinations of unbalanced ones, see `checkBasis`),
 * i.e. x* = x0 − W⁻¹Cᵀ(C W⁻¹ Cᵀ)⁻¹(C x0 − a).
 *
 * Source: weighted minimum-norm projection [der]; the idea of repairing rate constants on a spanning tree /
 * by linear algebra: Colquhoun et al. 2004, Biophys J 86:3510 [pub]; thermodynamically consistent
 * calibration: Jenkinson & Goutsias 2011, BMC Syst Biol 5:64 [pub].
 * Cost: O(conditions² · steps + conditions³).
 * Invariants: weights w = relUncertainty² where given, 1 (a factor of e) where not; zero rates and rates
 * with relUncertainty 0 stay fixed; irreversible and unbalanced cycles are left alone. The conditions span
 * every reversible balanced cycle, so when `feasible` the corrected scheme is consistent on all of them
 * (checked: every condition's residual is verified after the solve). When no change of the free rates can
 * satisfy every condition, `feasible` is false, `reason` names the conditions left unsatisfied and
 * `changes` is empty (a partial repair would leave violations behind).
 */
import type { ConsistencyCondition } from './consistency';
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
	/** true when the changes make every reversible balanced cycle consistent */
	feasible: boolean;
	/** why no change of the free rates restores consistency; null when feasible */
	reason: string | null;
	changes: RateChange[];
	/** independent conditions constrained to exact consistency (basis cycles and balanced combinations) */
	cyclesConstrained: number;
	/** weighted sum of squared log changes, Σ (Δ ln k)²/w */
	weightedSquaredChange: number;
	weighting: 'uncertainties' | 'uniform';
}

/** A condition named by its cycle: "E → T → DP → D" (a basis cycle) or "b3 + ½·b5" (a combination). */
function describe(condition: ConsistencyCondition, basis: readonly Cycle[], table: RateTable): string {
	const path = (b: number) => basis[b].states.map((i) => table.stateIds[i]).join(' → ');
	if (condition.basisCycles.length === 1) return `cycle ${path(condition.basisCycles[0])}`;
	return `the balanced combination of cycles ${condition.basisCycles.map((b, k) => `${condition.coefficients[k]} × (${path(b)})`).join(' + ')}`;
}

export function proposeCorrection(
	scheme: Scheme,
	table: RateTable,
	basis: readonly Cycle[],
	conditions: readonly ConsistencyCondition[]
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
	const weighting = anyUncertainty ? 'uncertainties' : 'uniform';
	const rows = conditions.map((condition) => {
		const coefficient = new Map<number, number>();
		for (const [step, a] of condition.stepCoefficients) {
			if (a === 0) continue;
			coefficient.set(2 * step, a);
			coefficient.set(2 * step + 1, -a);
		}
		return { condition, coefficient, residual: condition.deviationLog10 * Math.LN10 };
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
	// a singular G means dependent rows on the free rates: fine when their residuals agree, infeasible when not
	const unmet: { row: (typeof rows)[number]; free: boolean }[] = [];
	for (const row of rows) {
		let after = row.residual;
		let scale = Math.abs(row.residual);
		let free = false;
		for (const [v, a] of row.coefficient) {
			after += a * delta[v];
			scale += Math.abs(a * delta[v]);
			if (variance[v] > 0) free = true;
		}
		if (Math.abs(after) > 1e-9 * (1 + scale)) unmet.push({ row, free });
	}
	if (unmet.length) {
		const pinned = unmet.filter((u) => !u.free).map((u) => describe(u.row.condition, basis, table));
		const clashing = unmet.filter((u) => u.free).map((u) => describe(u.row.condition, basis, table));
		const parts: string[] = [];
		if (pinned.length)
			parts.push(`every rate of ${pinned.join('; ')} is fixed (zero, or stated exact with relUncertainty 0), so nothing may move to repair it`);
		if (clashing.length)
			parts.push(`the free rates of ${clashing.join('; ')} are shared with other cycles that need a different change`);
		return {
			feasible: false,
			reason: `No change of the free rates restores consistency: ${parts.join('; and ')}. Give the fixed rates an uncertainty or correct them by hand.`,
			changes: [],
			cyclesConstrained: B,
			weightedSquaredChange: 0,
			weighting
		};
	}
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
	return { feasible: true, reason: null, changes, cyclesConstrained: B, weightedSquaredChange: weighted, weighting };
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
