/**
 * Simple cycles of the undirected multigraph of steps (two parallel steps make a two-state cycle), and a
 * fundamental cycle basis.
 *
 * Source: cycle enumeration by depth-first search from the least state of each cycle, each cycle kept in
 * one orientation (Tiernan 1970, Commun ACM 13:722 [pub]); fundamental cycles of a spanning tree span the
 * cycle space, |steps| − |states| + 1 of them for a connected scheme (Kirchhoff 1847 [pub]).
 * Cost: enumeration O((states + steps)·(cycles + 1)) in practice, bounded by a cap on cycles and a work
 * budget; basis O(states + steps) per cycle.
 * Invariants: a cycle visits each state at most once, uses each step at most once, lists its states in
 * traversal order, and step i goes from states[i] to states[i+1 mod len]. Orientation: the direction in
 * which at least half of its steps run forward (from → to), so a motor's working cycle reads forward.
 */

export interface CycleStep {
	step: number;
	direction: 1 | -1;
}

export interface Cycle {
	states: number[];
	steps: CycleStep[];
}

export interface CycleGraph {
	n: number;
	m: number;
	from: ArrayLike<number>;
	to: ArrayLike<number>;
}

export const CYCLE_DEFAULTS = {
	maxCycles: 20_000,
	/** search steps allowed per cycle cap before the enumeration gives up as incomplete */
	workPerCycle: 2_000
};

function orient(cycle: Cycle): Cycle {
	let forward = 0;
	for (const s of cycle.steps) if (s.direction === 1) forward++;
	if (2 * forward >= cycle.steps.length) return cycle;
	const k = cycle.states.length;
	const states = [cycle.states[0]];
	for (let i = k - 1; i >= 1; i--) states.push(cycle.states[i]);
	const steps: CycleStep[] = [];
	for (let i = k - 1; i >= 0; i--) steps.push({ step: cycle.steps[i].step, direction: (-cycle.steps[i].direction) as 1 | -1 });
	return { states, steps };
}

function adjacency(g: CycleGraph) {
	const degree = new Int32Array(g.n + 1);
	for (let s = 0; s < g.m; s++) {
		degree[g.from[s] + 1]++;
		degree[g.to[s] + 1]++;
	}
	for (let i = 0; i < g.n; i++) degree[i + 1] += degree[i];
	const start = degree.slice();
	const neighbour = new Int32Array(2 * g.m);
	const viaStep = new Int32Array(2 * g.m);
	const direction = new Int8Array(2 * g.m);
	const fill = start.slice();
	for (let s = 0; s < g.m; s++) {
		const a = g.from[s];
		const b = g.to[s];
		neighbour[fill[a]] = b;
		viaStep[fill[a]] = s;
		direction[fill[a]++] = 1;
		neighbour[fill[b]] = a;
		viaStep[fill[b]] = s;
		direction[fill[b]++] = -1;
	}
	return { start, neighbour, viaStep, direction };
}

/** Why an enumeration stopped before the last cycle: the cap on cycles, or the budget of search steps. */
export type EnumerationStop = 'cap' | 'work budget';

/**
 * Every simple cycle, up to `maxCycles`; `complete` is false when the cap or the work budget stopped it, and
 * `stoppedBy` says which. The depth-first search keeps its own stack (no recursion, so deep schemes are fine).
 */
export function enumerateCycles(
	g: CycleGraph,
	options: Partial<typeof CYCLE_DEFAULTS> = {}
): { cycles: Cycle[]; complete: boolean; stoppedBy: EnumerationStop | null } {
	const { maxCycles, workPerCycle } = { ...CYCLE_DEFAULTS, ...options };
	const { start, neighbour, viaStep, direction } = adjacency(g);
	const cycles: Cycle[] = [];
	const onPath = new Uint8Array(g.n);
	const pathStates: number[] = [];
	const pathSteps: CycleStep[] = [];
	// next edge to try at each depth of the path
	const cursor = new Int32Array(g.n + 1);
	const budget = Math.max(100_000, maxCycles * workPerCycle);
	let work = 0;
	let stoppedBy: EnumerationStop | null = null;

	for (let root = 0; root < g.n && !stoppedBy; root++) {
		onPath[root] = 1;
		pathStates.push(root);
		cursor[0] = start[root];
		let depth = 0;
		while (depth >= 0) {
			const v = pathStates[depth];
			const e = cursor[depth];
			if (e >= start[v + 1]) {
				// every edge of v tried: step back
				onPath[v] = 0;
				pathStates.pop();
				if (depth > 0) pathSteps.pop();
				depth--;
				continue;
			}
			cursor[depth] = e + 1;
			if (++work > budget) {
				stoppedBy = 'work budget';
				break;
			}
			const w = neighbour[e];
			const s = viaStep[e];
			if (w === root) {
				// close only with a step of higher index than the first: one orientation, no step used twice
				if (pathSteps.length >= 1 && s > pathSteps[0].step) {
					if (cycles.length >= maxCycles) {
						stoppedBy = 'cap';
						break;
					}
					cycles.push(
						orient({
							states: pathStates.slice(),
							steps: [...pathSteps, { step: s, direction: direction[e] as 1 | -1 }]
						})
					);
				}
				continue;
			}
			if (w < root || onPath[w]) continue;
			onPath[w] = 1;
			pathStates.push(w);
			pathSteps.push({ step: s, direction: direction[e] as 1 | -1 });
			cursor[++depth] = start[w];
		}
		if (stoppedBy) {
			onPath.fill(0);
			pathStates.length = 0;
			pathSteps.length = 0;
		}
	}
	return { cycles, complete: stoppedBy === null, stoppedBy };
}

/**
 * Fundamental cycles of a spanning forest: one per step outside the forest. The forest takes steps in
 * order of `preference` (lower first, then by index; Kruskal's greedy order), so that when the preferred
 * steps alone join two states the tree path between them uses only preferred steps: with reversible,
 * balanced steps preferred, every reversible cycle is a sum of basis cycles that are themselves reversible.
 */
export function cycleBasis(g: CycleGraph, preference?: ArrayLike<number>): Cycle[] {
	const order = [...Array(g.m).keys()];
	if (preference) order.sort((a, b) => preference[a] - preference[b] || a - b);
	// union–find (with path halving) picks the forest's steps
	const root = new Int32Array(g.n).map((_, i) => i);
	const find = (x: number) => {
		while (root[x] !== x) x = root[x] = root[root[x]];
		return x;
	};
	const inTree = new Uint8Array(g.m);
	for (const s of order) {
		const a = find(g.from[s]);
		const b = find(g.to[s]);
		if (a === b) continue;
		root[a] = b;
		inTree[s] = 1;
	}
	// parents and depths by a breadth-first walk of the forest
	const treeGraph = adjacency(g);
	const parent = new Int32Array(g.n).fill(-1);
	const parentStep = new Int32Array(g.n).fill(-1);
	const depth = new Int32Array(g.n).fill(-1);
	for (let r = 0; r < g.n; r++) {
		if (depth[r] >= 0) continue;
		depth[r] = 0;
		const queue = [r];
		for (let q = 0; q < queue.length; q++) {
			const v = queue[q];
			for (let e = treeGraph.start[v]; e < treeGraph.start[v + 1]; e++) {
				const s = treeGraph.viaStep[e];
				const w = treeGraph.neighbour[e];
				if (!inTree[s] || depth[w] >= 0) continue;
				depth[w] = depth[v] + 1;
				parent[w] = v;
				parentStep[w] = s;
				queue.push(w);
			}
		}
	}
	const up = (w: number): CycleStep => {
		const s = parentStep[w];
		return { step: s, direction: g.from[s] === w ? 1 : -1 };
	};
	const basis: Cycle[] = [];
	for (let s = 0; s < g.m; s++) {
		if (inTree[s]) continue;
		const u = g.from[s];
		const v = g.to[s];
		// walk both ends up to their lowest common ancestor
		const chainV: number[] = [];
		const chainU: number[] = [];
		let a = v;
		let b = u;
		while (depth[a] > depth[b]) {
			chainV.push(a);
			a = parent[a];
		}
		while (depth[b] > depth[a]) {
			chainU.push(b);
			b = parent[b];
		}
		while (a !== b) {
			chainV.push(a);
			a = parent[a];
			chainU.push(b);
			b = parent[b];
		}
		// u →(s) v → … → ancestor → … → u; `arrivals` lists the state reached after each step
		const steps: CycleStep[] = [{ step: s, direction: 1 }];
		const arrivals: number[] = [v];
		for (const w of chainV) {
			steps.push(up(w));
			arrivals.push(parent[w]);
		}
		for (let i = chainU.length - 1; i >= 0; i--) {
			const w = chainU[i];
			const st = up(w);
			steps.push({ step: st.step, direction: (-st.direction) as 1 | -1 });
			arrivals.push(w);
		}
		basis.push(orient({ states: [u, ...arrivals.slice(0, -1)], steps }));
	}
	return basis;
}
