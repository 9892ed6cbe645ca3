/**
 * Thermodynamic efficiency of a motor by regime, from the load F (pN, positive opposes forward motion), the
 * velocity V (nm/s) and the turnover ρ_r (/s) and free energy ΔG_r (pN·nm) of each reference reaction.
 *
 * Motor regime, downhill chemistry doing work against the load (F·V > 0, Σ ρ_r·(−ΔG_r) > 0):
 *   η = F·V / Σ_r ρ_r·(−ΔG_r).
 * Synthase regime, the load driving the chemistry uphill (F·V < 0, Σ ρ_r·ΔG_r > 0):
 *   η = Σ_r ρ_r·ΔG_r / (−F·V).
 * Source: Parmeggiani, Jülicher, Ajdari & Prost 1999, PRE 60:2127 [pub] (see shared science notes, [mem] there).
 * The entropy production T·σ = Σ ρ_r·(−ΔG_r) − F·V ≥ 0 puts both in [0, 1] for a consistent scheme [der].
 * Cost: O(reactions).
 * Invariants: value in [0, 1] or null, and null always comes with the reason; the regime is named when a value is given.
 */

export type EfficiencyRegime = 'motor' | 'synthase';

export interface EfficiencyInput {
	forcePN: number;
	velocityNmPerS: number;
	/** turnover of each reference reaction, /s (positive: runs as written) */
	reactionRatesPerS: ArrayLike<number>;
	/** ΔG of each reference reaction at the conditions, pN·nm (negative: downhill as written) */
	reactionDeltaGpNnm: ArrayLike<number>;
}

export interface Efficiency {
	value: number | null;
	regime: EfficiencyRegime | null;
	/** why value is null; null when a value is given */
	reason: string | null;
}

export const EFFICIENCY_DEFAULTS = {
	/** rounding allowed above 1 before a value counts as breaking the second law */
	slack: 1e-9
};

const SECOND_LAW =
	'the second law forbids it: the scheme breaks thermodynamic consistency, or some exchange of species is missing from the reference reactions';

export function efficiency(input: EfficiencyInput, options: Partial<typeof EFFICIENCY_DEFAULTS> = {}): Efficiency {
	const o = { ...EFFICIENCY_DEFAULTS, ...options };
	const { forcePN: F, velocityNmPerS: V } = input;
	const none = (reason: string): Efficiency => ({ value: null, regime: null, reason });
	let chemical = 0; // Σ ρ_r·(−ΔG_r): free energy released by the chemistry per second, pN·nm/s
	for (let r = 0; r < input.reactionRatesPerS.length; r++) chemical -= input.reactionRatesPerS[r] * input.reactionDeltaGpNnm[r];
	const mechanical = F * V; // work done against the load per second, pN·nm/s
	if (!(Number.isFinite(chemical) && Number.isFinite(mechanical))) return none('the velocity or a turnover rate is not finite');
	if (F === 0) return none('no load: no work is done against a load, so there is nothing to convert (η would be 0)');
	if (V === 0) return none('the motor is stalled (V = 0): no work is done either way');
	if (chemical === 0)
		return none(
			mechanical > 0
				? `work against the load with no net chemistry: ${SECOND_LAW}`
				: 'the load drives the motor but no reference reaction turns over to store the work; it is all dissipated'
		);
	let value: number;
	let regime: EfficiencyRegime;
	if (mechanical > 0 && chemical > 0) [value, regime] = [mechanical / chemical, 'motor'];
	else if (mechanical < 0 && chemical < 0) [value, regime] = [chemical / mechanical, 'synthase'];
	else if (mechanical < 0)
		return none('the load assists the motion (F·V < 0) while the chemistry runs downhill: both dissipate, no free energy is transduced');
	else return none(`work against the load while the chemistry runs uphill: ${SECOND_LAW}`);
	if (value > 1 + o.slack) return none(`η would be ${Number(value.toPrecision(4))} in the ${regime} regime, above 1: ${SECOND_LAW}`);
	return { value: Math.min(value, 1), regime, reason: null };
}
