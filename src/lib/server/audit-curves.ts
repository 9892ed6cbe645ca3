/**
 * Curves and pictures derived from a stored audit's inputs, for its page and the JSON API: velocity against load
 * or against one species' concentration, the stall force, and the directed spanning trees of small schemes.
 * Everything is recomputed by the engine from the stored inputs (never from edited data), so it matches the audit.
 */
import {
	CYCLE_DEFAULTS,
	effectiveRates,
	enumerateCycles,
	spanningTreesInto,
	stallSearch,
	velocityAt,
	withConditions,
	type Scheme,
	type StallSearch
} from '../engine';
import { spacedPoints } from '../components/plot-scale';

/** Points of one sweep; past the work budget (engine-pool.ts) a sweep runs as a job. */
export const SWEEP_MAX_POINTS = 2000;
/** Largest scheme whose spanning trees are drawn (beyond, their number explodes and the pictures say nothing). */
export const TREE_MAX_STATES = 8;
/** Pictures sent per state; the count and Σ always cover all trees. */
export const TREE_PICTURE_LIMIT = 250;

/**
 * Every stall force of the stored scheme with the reason when there is none, as the audit computes it: bracketed
 * exactly by the cycles when they can all be listed, else a scan of ±1000 pN; here with no work budget.
 */
export function stallForces(scheme: Scheme): StallSearch {
	const listed = enumerateCycles(effectiveRates(scheme), { maxCycles: CYCLE_DEFAULTS.maxCycles });
	return stallSearch(scheme, { cycles: listed.complete ? listed.cycles : null });
}

/** The stall force nearest zero load, or null when there is none. */
export function stallForceOrNull(scheme: Scheme): number | null {
	return stallForces(scheme).stallForcePN;
}

/**
 * The stall force a stored audit carries (null: it has none, and a finding says why), or undefined when the audit
 * did not search for it (stored before the audit carried it, or past its work budget) and it must be computed.
 */
export function storedStallForce(observables: { stallForcePN?: number | null; stallForcesPN?: number[] | null }): number | null | undefined {
	return Array.isArray(observables.stallForcesPN) ? (observables.stallForcePN ?? null) : undefined;
}

/** Species whose concentration the scheme uses: bound, released, or in a reference reaction. */
export function speciesOf(scheme: Scheme): string[] {
	const names = new Set<string>(Object.keys(scheme.concentrationsM));
	for (const step of scheme.steps) for (const x of [...step.binds, ...step.releases]) names.add(x);
	for (const r of scheme.reactions) for (const x of Object.keys(r.stoichiometry)) names.add(x);
	return [...names].sort();
}

export interface SweepPoint {
	x: number;
	velocityNmPerS: number | null;
}

/**
 * Velocity at `points` values of the load (pN, evenly spaced) or of one species' concentration (M, evenly in log10),
 * all other conditions as stored.
 */
export function velocitySweep(
	scheme: Scheme,
	variable: 'force' | string,
	from: number,
	to: number,
	points: number,
	onPoint?: (done: number, total: number) => void
): SweepPoint[] {
	const log = variable !== 'force';
	return spacedPoints(from, to, points, log).map((x, i) => {
		const v = log ? velocityAt(withConditions(scheme, { concentrationsM: { [variable]: x } }), scheme.forcePN) : velocityAt(scheme, x);
		onPoint?.(i + 1, points);
		return { x, velocityNmPerS: Number.isFinite(v) ? v : null };
	});
}

export interface TreePicture {
	edges: { stepId: string; from: string; to: string; rate: number }[];
	weight: number;
}

export interface TreeSet {
	root: string;
	states: string[];
	trees: TreePicture[];
	count: number;
	weightSum: number;
	truncated: boolean;
}

/** Directed spanning trees into `stateId` (only for schemes up to TREE_MAX_STATES states). */
export function treesInto(scheme: Scheme, stateId: string): TreeSet {
	const list = spanningTreesInto(scheme, stateId, { maxStates: TREE_MAX_STATES, limit: TREE_PICTURE_LIMIT });
	return {
		root: list.root,
		states: scheme.states.map((s) => s.id),
		trees: list.trees,
		count: list.count,
		weightSum: list.weightSum,
		truncated: list.truncated
	};
}
