/**
 * Effective rates of every step at the scheme's conditions, and the dense rate matrix K.
 *
 * k+ = kForward · Π_binds c · exp(−θ·F·d/kBT),  k− = kBackward · Π_releases c · exp(+(1−θ)·F·d/kBT).
 * Source: Bell 1978, Science 200:618; Fisher & Kolomeisky 1999, PNAS 96:6597 [pub] (load splitting θ, 1−θ).
 * Cost: O(steps + n²) for the matrix.
 * Invariants: rates finite and ≥ 0 for a valid scheme; K has a zero diagonal and K_ij sums parallel steps i→j.
 */
import type { Scheme } from './scheme';
import { thermalEnergyPNnm } from './units';

export interface RateTable {
	/** number of states */
	n: number;
	/** number of steps */
	m: number;
	stateIds: string[];
	stateIndex: Map<string, number>;
	stepIds: string[];
	from: Int32Array;
	to: Int32Array;
	kPlus: Float64Array;
	kMinus: Float64Array;
	/** ln k+ and ln k− (−Infinity for a zero rate): products along cycles are sums of these. */
	lnPlus: Float64Array;
	lnMinus: Float64Array;
	displacementNm: Float64Array;
	/** kB·T in pN·nm */
	kT: number;
}

export function effectiveRates(scheme: Scheme): RateTable {
	const n = scheme.states.length;
	const m = scheme.steps.length;
	const stateIndex = new Map(scheme.states.map((s, i) => [s.id, i]));
	const kT = thermalEnergyPNnm(scheme.temperatureK);
	const F = scheme.forcePN;
	const table: RateTable = {
		n,
		m,
		stateIds: scheme.states.map((s) => s.id),
		stateIndex,
		stepIds: scheme.steps.map((s) => s.id),
		from: new Int32Array(m),
		to: new Int32Array(m),
		kPlus: new Float64Array(m),
		kMinus: new Float64Array(m),
		lnPlus: new Float64Array(m),
		lnMinus: new Float64Array(m),
		displacementNm: new Float64Array(m),
		kT
	};
	scheme.steps.forEach((step, s) => {
		table.from[s] = stateIndex.get(step.from)!;
		table.to[s] = stateIndex.get(step.to)!;
		const d = step.displacementNm;
		const theta = step.loadFraction;
		// Logs as well, so that cycle products of extreme rates never overflow before they cancel.
		let lnPlus = Math.log(step.kForward) - (theta * F * d) / kT;
		for (const x of step.binds) lnPlus += Math.log(scheme.concentrationsM[x]);
		let lnMinus = Math.log(step.kBackward) + ((1 - theta) * F * d) / kT;
		for (const x of step.releases) lnMinus += Math.log(scheme.concentrationsM[x]);
		table.lnPlus[s] = lnPlus;
		table.lnMinus[s] = lnMinus;
		// direct products keep exact inputs exact (exp(0) = 1); the logs serve cycle products
		let kPlus = step.kForward * Math.exp(-(theta * F * d) / kT);
		for (const x of step.binds) kPlus *= scheme.concentrationsM[x];
		let kMinus = step.kBackward * Math.exp(((1 - theta) * F * d) / kT);
		for (const x of step.releases) kMinus *= scheme.concentrationsM[x];
		table.kPlus[s] = kPlus;
		table.kMinus[s] = kMinus;
		table.displacementNm[s] = d;
	});
	return table;
}

/** Dense n×n matrix of summed transition rates, row-major, zero diagonal. */
export function rateMatrix(table: RateTable): Float64Array {
	const { n, m, from, to, kPlus, kMinus } = table;
	const K = new Float64Array(n * n);
	for (let s = 0; s < m; s++) {
		K[from[s] * n + to[s]] += kPlus[s];
		K[to[s] * n + from[s]] += kMinus[s];
	}
	return K;
}

export interface Conditions {
	temperatureK?: number;
	forcePN?: number;
	concentrationsM?: Record<string, number>;
}

/** A copy of the scheme at other conditions (concentrations merge into the existing ones). */
export function withConditions(scheme: Scheme, conditions: Conditions): Scheme {
	return {
		...scheme,
		temperatureK: conditions.temperatureK ?? scheme.temperatureK,
		forcePN: conditions.forcePN ?? scheme.forcePN,
		concentrationsM: { ...scheme.concentrationsM, ...(conditions.concentrationsM ?? {}) }
	};
}
