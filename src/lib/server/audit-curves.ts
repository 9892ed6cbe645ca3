/**
 * Curves and pictures derived from a stored audit's inputs, for its page and the JSON API: velocity against load
 * or against one species' concentration, the stall force, and the directed spanning trees of small schemes.
 * Everything is recomputed by the engine from the stored inputs (never from edited data), so it matches the audit.
 */
import { EngineError, spanningTreesInto, stallForce, velocityAt, withConditions, type Scheme } from '../engine';
import { spacedPoints } from '../components/plot-scale';

export const SWEEP_MAX_POINTS = 200;
/** Largest scheme whose spanning trees are drawn (beyond, their number explodes and the pictures say nothing). */
export const TREE_MAX_STATES = 8;
/** Pictures sent per state; the count and Σ always cover all trees. */
export const TREE_PICTURE_LIMIT = 250;

/** The stall force at the stored conditions, or null when the engine finds none (no reversal within ±1000 pN). */
export function stallForceOrNull(scheme: Scheme): number | null {
	try {
		return stallForce(scheme);
	} catch (err) {
		if (err instanceof EngineError) return null;
		throw err;
	}
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
