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

/** Every simple cycle, up to `maxCycles`; `complete` is false when the cap or the work budget stopped it. */
export function enumerateCycles(
	g: CycleGraph,
	options: Partial<typeof CYCLE_DEFAULTS> = {}
): { cycles: Cycle[]; complete: boolean } {
	const { maxCycles, workPerCycle } = { ...CYCLE_DEFAULTS, ...options };
	const { start, neighbour, viaStep, direction } = adjacency(g);
	const cycles: Cycle[] = [];
	const onPath = new Uint8Array(g.n);
	const pathStates: number[] = [];
	const pathSteps: CycleStep[] = [];
	const budget = Math.max(100_000, maxCycles * workPerCycle);
	let work = 0;
	let stopped = false;

	// Explicit stack instead of recursion: a path can be as long as the scheme has states (a 5,000-state ring),
	// deeper than the call stack allows. `edgeAt[d]` is the next edge to try from the d-th state of the path.
	const edgeAt = new Int32Array(g.n + 1);
	for (let root = 0; root < g.n && !stopped; root++) {
		onPath[root] = 1;
		pathStates.push(root);
		edgeAt[0] = start[root];
		while (pathStates.length > 0 && !stopped) {
			const d = pathStates.length - 1;
			const v = pathStates[d];
			const e = edgeAt[d];
			if (e >= start[v + 1]) {
				// every edge of v tried: step back
				onPath[v] = 0;
				pathStates.pop();
				if (d > 0) pathSteps.pop();
				continue;
			}
			edgeAt[d] = e + 1;
			if (++work > budget) {
				stopped = true;
				break;
			}
			const w = neighbour[e];
			const s = viaStep[e];
			if (w === root) {
				// close only with a step of higher index than the first: one orientation, no step used twice
				if (pathSteps.length >= 1 && s > pathSteps[0].step) {
					if (cycles.length >= maxCycles) {
						stopped = true;
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
			edgeAt[d + 1] = start[w];
		}
		for (const v of pathStates) onPath[v] = 0;
		pathStates.length = 0;
		pathSteps.length = 0;
	}
	return { cycles, complete: !stopped };
}

/** Fundamental cycles of a breadth-first spanning forest: one per step outside the forest. */
export function cycleBasis(g: CycleGraph): Cycle[] {
	const { start, neighbour, viaStep } = adjacency(g);
	const parent = new Int32Array(g.n).fill(-1);
	const parentStep = new Int32Array(g.n).fill(-1);
	const depth = new Int32Array(g.n).fill(-1);
	const inTree = new Uint8Array(g.m);
	for (let r = 0; r < g.n; r++) {
		if (depth[r] >= 0) continue;
		depth[r] = 0;
		const queue = [r];
		for (let q = 0; q < queue.length; q++) {
			const v = queue[q];
			for (let e = start[v]; e < start[v + 1]; e++) {
				const w = neighbour[e];
				if (depth[w] >= 0) continue;
				depth[w] = depth[v] + 1;
				parent[w] = v;
				parentStep[w] = viaStep[e];
				inTree[viaStep[e]] = 1;
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
