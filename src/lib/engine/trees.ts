/**
 * Brute-force enumeration of directed spanning trees (the diagram method of King & Altman and Hill): every
 * tree of the scheme's steps with all edges pointing towards a chosen root, its edges and weight; and the
 * spanning forests directed into a set of states (Σ_κ of a cycle). A slow, independent check on GTH and the
 * source of the diagrams the UI draws for small schemes.
 *
 * Source: King & Altman 1956, J Phys Chem 60:1375; Hill 1966, J Theor Biol 10:442; Tutte's directed
 * matrix-tree theorem; all-minors form: Chaiken 1982, SIAM J Alg Disc Meth 3:319 [pub].
 * Cost: O(Π over non-root states of their number of steps · n) — exponential; refused above maxStates.
 * Invariants: parallel steps are distinct edges (as in the diagrams); directions with a zero rate are left
 * out (their trees weigh 0); with unit rates on K_n the count is Cayley's n^(n−2).
 */
import type { RateTable } from './rates';
import { effectiveRates } from './rates';
import { EngineError, type Scheme } from './scheme';

export interface DirectedEdge {
	stepId: string;
	from: string;
	to: string;
	/** effective rate of this direction, s⁻¹ */
	rate: number;
}

export interface SpanningTree {
	edges: DirectedEdge[];
	weight: number;
}

export interface SpanningTreeList {
	root: string;
	/** the first `limit` trees in enumeration order */
	trees: SpanningTree[];
	/** number of trees with nonzero weight */
	count: number;
	/** Σ_root, the sum of all tree weights */
	weightSum: number;
	truncated: boolean;
}

export const TREE_DEFAULTS = { limit: 200, maxStates: 10 };

interface OutEdge {
	step: number;
	to: number;
	rate: number;
}

/**
 * Enumerates the maps "each state outside `targets` picks one outgoing edge" whose pointers lead into
 * `targets` without a loop; calls `visit` with the chosen edge per state (−1 for targets) and the weight.
 */
export function enumerateForests(
	table: RateTable,
	targets: ArrayLike<number>,
	visit?: (choice: Int32Array, outEdges: OutEdge[][], weight: number) => void
): { count: number; weightSum: number } {
	const n = table.n;
	const isTarget = new Uint8Array(n);
	for (let t = 0; t < targets.length; t++) isTarget[targets[t]] = 1;
	const outEdges: OutEdge[][] = Array.from({ length: n }, () => []);
	for (let s = 0; s < table.m; s++) {
		if (table.kPlus[s] > 0) outEdges[table.from[s]].push({ step: s, to: table.to[s], rate: table.kPlus[s] });
		if (table.kMinus[s] > 0) outEdges[table.to[s]].push({ step: s, to: table.from[s], rate: table.kMinus[s] });
	}
	const free: number[] = [];
	for (let i = 0; i < n; i++) if (!isTarget[i]) free.push(i);
	const next = new Int32Array(n).fill(-1);
	const choice = new Int32Array(n).fill(-1);
	let count = 0;
	let weightSum = 0;
	// Iterative depth-first placement (one level per free state) so a long chain of states cannot overflow the
	// call stack; `edgeAt[k]` is the next edge to try for free[k], `weightAt[k]` the product of the edges above it.
	const edgeAt = new Int32Array(free.length + 1);
	const weightAt = new Float64Array(free.length + 1);
	weightAt[0] = 1;
	let k = 0;
	while (k >= 0) {
		if (k === free.length) {
			count++;
			weightSum += weightAt[k];
			visit?.(choice, outEdges, weightAt[k]);
			k--;
			continue;
		}
		const u = free[k];
		const edges = outEdges[u];
		if (choice[u] >= 0) {
			// coming back from level k + 1: undo this level's choice
			next[u] = -1;
			choice[u] = -1;
		}
		let placed = false;
		while (edgeAt[k] < edges.length) {
			const e = edgeAt[k]++;
			// reject a choice that closes a loop among the states placed so far
			let w = edges[e].to;
			let loops = false;
			for (let hops = 0; hops <= n && !isTarget[w] && next[w] >= 0; hops++) {
				if (w === u) {
					loops = true;
					break;
				}
				w = next[w];
			}
			if (loops || w === u) continue;
			next[u] = edges[e].to;
			choice[u] = e;
			weightAt[k + 1] = weightAt[k] * edges[e].rate;
			edgeAt[k + 1] = 0;
			placed = true;
			break;
		}
		if (placed) k++;
		else {
			edgeAt[k] = 0;
			k--;
		}
	}
	return { count, weightSum };
}

/** Σ_i for every state by brute force: the weight sums of trees directed into each state. */
export function bruteForceTreeSums(table: RateTable): Float64Array {
	const sums = new Float64Array(table.n);
	for (let i = 0; i < table.n; i++) sums[i] = enumerateForests(table, [i]).weightSum;
	return sums;
}

/** The directed spanning trees into `stateId`, for diagrams (schemes up to `maxStates` states). */
export function spanningTreesInto(
	scheme: Scheme,
	stateId: string,
	options: Partial<typeof TREE_DEFAULTS> = {}
): SpanningTreeList {
	const { limit, maxStates } = { ...TREE_DEFAULTS, ...options };
	const table = effectiveRates(scheme);
	const root = table.stateIndex.get(stateId);
	if (root === undefined) throw new EngineError('trees', `unknown state "${stateId}"; pick one of ${table.stateIds.join(', ')}`);
	if (table.n > maxStates)
		throw new EngineError(
			'trees',
			`${table.n} states are too many to enumerate trees (limit ${maxStates}); the audit's GTH path gives the same Σ without them`
		);
	const trees: SpanningTree[] = [];
	const { count, weightSum } = enumerateForests(table, [root], (choice, outEdges, weight) => {
		if (trees.length >= limit) return;
		const edges: DirectedEdge[] = [];
		for (let u = 0; u < table.n; u++) {
			if (choice[u] < 0) continue;
			const e = outEdges[u][choice[u]];
			edges.push({ stepId: table.stepIds[e.step], from: table.stateIds[u], to: table.stateIds[e.to], rate: e.rate });
		}
		trees.push({ edges, weight });
	});
	return { root: stateId, trees, count, weightSum, truncated: count > trees.length };
}
