/**
 * Steady state of a scheme by the Markov chain tree theorem, computed subtraction-free with GTH elimination:
 * p_i = Σ_i/Σ, with ln Σ kept in log space so that products of hundreds of rates never overflow; and every step's
 * net flux with an error relative to the flux itself, even where one-way fluxes dwarf it.
 *
 * Source: Kirchhoff 1847; Tutte's directed matrix-tree theorem; King & Altman 1956, J Phys Chem 60:1375;
 * Hill 1966, J Theor Biol 10:442 [pub]; GTH elimination, Grassmann, Taksar & Heyman 1985 [pub]. Net fluxes:
 * p is refined against residuals p·L evaluated in double-double (once, unless the correction was large) (Dekker 1971, Numer Math 18:224 [pub];
 * iterative refinement with extended-precision residuals, Wilkinson 1963 [pub]), the chords of a spanning tree of
 * the fastest steps get p_from·k+ − p_to·k− in double-double, and the tree steps follow by Kirchhoff's current law
 * [pub], which makes a dead end's net flux exactly 0 and keeps flux balance to rounding.
 * Cost: O(n³) (zero rates skipped) + O(n² + steps) for the refinement and the fluxes.
 * Invariants: p ≥ 0, Σp = 1 to rounding, every p_i with small relative error; `logP` = ln p_i exact to rounding
 * even where p_i underflows (< 1e-308, log-scale elimination); states outside the unique closed class get exactly
 * 0 (logP −Infinity); net fluxes conserve probability at every state.
 */
import { ddAdd, ddMulNumber, twoProduct, dd } from './double-double';
import { gthFactor, logStationary, logTreeSum, solveLeft, stationaryInRange, type GthFactor } from './gth';
import { rateMatrix, type RateTable } from './rates';

export interface SteadyState {
	K: Float64Array;
	factor: GthFactor;
	p: Float64Array;
	/** low parts: p_i + pLow_i is p_i to about 32 digits (all 0 when `logScale`) */
	pLow: Float64Array;
	/** ln p_i, −Infinity for a transient state */
	logP: Float64Array;
	/** true when some p_i left the double range and the probabilities come from the log-scale elimination */
	logScale: boolean;
	/** ln Σ, Σ the weight sum of all directed spanning trees */
	logSigma: number;
}

/** At most this many refinement steps; one suffices unless net fluxes cancel strongly. */
const REFINEMENTS = 3;

function nameStates(err: unknown, table: RateTable): never {
	// GTH knows state numbers only; name the states
	if (err instanceof Error) err.message = err.message.replace(/#(\d+)/g, (_, i) => `"${table.stateIds[Number(i)]}"`);
	throw err;
}

export function steadyState(table: RateTable): SteadyState {
	const K = rateMatrix(table);
	const n = table.n;
	let factor: GthFactor;
	try {
		factor = gthFactor(K, n);
	} catch (err) {
		nameStates(err, table);
	}
	let p = stationaryInRange(K, factor);
	let log: ReturnType<typeof logStationary> | null = null;
	if (p === null) {
		try {
			log = logStationary(K, n, factor.order[0]);
		} catch (err) {
			nameStates(err, table);
		}
		// The elimination order decides what under- or overflows: try again into the most and into the least probable
		// state of the closed class, and stay in double precision (and its refinement) when that keeps p in range.
		let top = 0;
		let bottom = -1;
		for (let i = 0; i < n; i++) {
			if (log.logP[i] > log.logP[top]) top = i;
			if (log.logP[i] > -Infinity && (bottom < 0 || log.logP[i] < log.logP[bottom])) bottom = i;
		}
		for (const root of [top, bottom]) {
			if (p !== null || root === factor.order[0]) continue;
			try {
				const again = gthFactor(K, n, root);
				p = stationaryInRange(K, again);
				if (p !== null) factor = again;
			} catch {
				p = null; // a pivot underflowed: the log-scale result stands
			}
		}
	}
	if (p === null && log !== null) {
		const scaled = new Float64Array(n);
		for (let i = 0; i < n; i++) scaled[i] = Math.exp(log.logP[i]);
		return {
			K,
			factor,
			p: scaled,
			pLow: new Float64Array(n),
			logP: log.logP,
			logScale: true,
			logSigma: log.logRootTreeSum - log.logP[factor.order[0]]
		};
	}
	const pLow = refine(table, factor, p!);
	const q = p!;
	const logP = new Float64Array(n);
	for (let i = 0; i < n; i++) logP[i] = q[i] > 0 ? Math.log(q[i]) + Math.log1p(pLow[i] / q[i]) : -Infinity;
	return { K, factor, p: q, pLow, logP, logScale: false, logSigma: logTreeSum(factor, q) };
}

/**
 * Iterative refinement of p in double-double: residual r = p·L from the step fluxes (exact products, double-double
 * sums), correction δ·L = −r with the GTH factors, then Σp = 1 again. Rewrites p (high parts), returns low parts.
 */
function refine(table: RateTable, factor: GthFactor, p: Float64Array): Float64Array {
	const { n, m, from, to, kPlus, kMinus } = table;
	const lo = new Float64Array(n);
	const rHi = new Float64Array(n);
	const rLo = new Float64Array(n);
	const t = dd();
	const u = dd();
	const minusR = new Float64Array(n);
	for (let it = 0; it < REFINEMENTS; it++) {
		rHi.fill(0);
		rLo.fill(0);
		let cancel = 1;
		for (let s = 0; s < m; s++) {
			const a = from[s];
			const b = to[s];
			netDD(p[a], lo[a], kPlus[s], p[b], lo[b], kMinus[s], t, u);
			// how far one-way fluxes dwarf the net one (true zeros, below double-double resolution, aside)
			const oneWay = p[a] * kPlus[s] + p[b] * kMinus[s];
			const net = Math.abs(t[0]);
			if (net > 1e-28 * oneWay) cancel = Math.max(cancel, oneWay / net);
			// (p·L)_a gains the net outflow of a, (p·L)_b loses it
			ddAdd(rHi[a], rLo[a], t[0], t[1], u);
			rHi[a] = u[0];
			rLo[a] = u[1];
			ddAdd(rHi[b], rLo[b], -t[0], -t[1], u);
			rHi[b] = u[0];
			rLo[b] = u[1];
		}
		let any = false;
		for (let i = 0; i < n; i++) {
			minusR[i] = -(rHi[i] + rLo[i]);
			if (minusR[i] !== 0) any = true;
		}
		if (!any) break;
		const delta = solveLeft(factor, minusR);
		let totHi = 0;
		let totLo = 0;
		let largest = 0;
		for (let i = 0; i < n; i++) {
			if (p[i] === 0) continue; // transient states stay exactly 0
			largest = Math.max(largest, Math.abs(delta[i]) / p[i]);
			ddAdd(p[i], lo[i], delta[i], 0, u);
			p[i] = u[0];
			lo[i] = u[1];
			ddAdd(totHi, totLo, p[i], lo[i], u);
			totHi = u[0];
			totLo = u[1];
		}
		// p /= Σp with Σp = 1 + ε: p − p·ε to double-double accuracy
		ddAdd(totHi, totLo, -1, 0, u);
		const eps = u[0] + u[1];
		for (let i = 0; i < n; i++) {
			if (p[i] === 0) continue;
			ddMulNumber(p[i], lo[i], -eps, t);
			ddAdd(p[i], lo[i], t[0], t[1], u);
			p[i] = u[0];
			lo[i] = u[1];
		}
		// the next correction would change p by about largest·(its relative error): stop when that cannot move a net
		// flux by more than 1e-16 of itself even where one-way fluxes are `cancel` times larger
		if (largest * cancel < 1e-14) break;
	}
	return lo;
}

/** out = (ah + al)·ka − (bh + bl)·kb in double-double; `tmp` is scratch. */
function netDD(ah: number, al: number, ka: number, bh: number, bl: number, kb: number, out: Float64Array, tmp: Float64Array) {
	twoProduct(ah, ka, tmp);
	const xh = tmp[0];
	const xl = tmp[1] + al * ka;
	twoProduct(bh, kb, tmp);
	const yh = tmp[0];
	const yl = tmp[1] + bl * kb;
	ddAdd(xh, xl, -yh, -yl, out);
}

export interface StepFlows {
	/** net flux p_from·k+ − p_to·k− of every step, error relative to itself */
	net: Float64Array;
	/** one-way fluxes p_from·k+ and p_to·k− */
	forward: Float64Array;
	backward: Float64Array;
	/** 1 for the steps of the spanning tree whose net fluxes follow from the chords by Kirchhoff's current law */
	inTree: Uint8Array;
	/** for each state but the tree's root: the tree step to its parent (−1 at the root) */
	parentStep: Int32Array;
	parent: Int32Array;
	/** states in breadth-first order from the root */
	treeOrder: Int32Array;
	/** estimated worst relative error of any nonzero net flux */
	netRelError: number;
	/** estimated absolute error of each net flux (a net flux within it of 0 is 0 within its error) */
	netAbsError: Float64Array;
}

const EPS = Number.EPSILON / 2;

/**
 * Net and one-way fluxes of every step. The spanning tree is a maximum spanning tree of the one-way flux
 * p_from·k+ + p_to·k− (Prim), so the steps that cancel most are tree steps, whose net fluxes are sums of chord fluxes.
 */
export function stepFlows(table: RateTable, ss: SteadyState): StepFlows {
	const { n, m, from, to, kPlus, kMinus, lnPlus, lnMinus } = table;
	const { p, pLow, logP, logScale } = ss;
	const forward = new Float64Array(m);
	const backward = new Float64Array(m);
	const net = new Float64Array(m);
	const netLo = new Float64Array(m);
	const t = dd();
	const u = dd();
	for (let s = 0; s < m; s++) {
		const a = from[s];
		const b = to[s];
		if (logScale) {
			forward[s] = kPlus[s] === 0 ? 0 : Math.exp(logP[a] + lnPlus[s]);
			backward[s] = kMinus[s] === 0 ? 0 : Math.exp(logP[b] + lnMinus[s]);
			net[s] = forward[s] - backward[s];
		} else {
			forward[s] = p[a] * kPlus[s];
			backward[s] = p[b] * kMinus[s];
			netDD(p[a], pLow[a], kPlus[s], p[b], pLow[b], kMinus[s], t, u);
			net[s] = t[0];
			netLo[s] = t[1];
		}
	}
	// maximum spanning tree of the one-way flux (Prim, O(n² + m) with a dense scan)
	const adjStart = new Int32Array(n + 1);
	for (let s = 0; s < m; s++) {
		adjStart[from[s] + 1]++;
		adjStart[to[s] + 1]++;
	}
	for (let i = 0; i < n; i++) adjStart[i + 1] += adjStart[i];
	const adj = new Int32Array(2 * m);
	const fill = adjStart.slice(0, n);
	for (let s = 0; s < m; s++) {
		adj[fill[from[s]]++] = s;
		adj[fill[to[s]]++] = s;
	}
	const best = new Float64Array(n).fill(-1);
	const bestStep = new Int32Array(n).fill(-1);
	const done = new Uint8Array(n);
	const parent = new Int32Array(n).fill(-1);
	const parentStep = new Int32Array(n).fill(-1);
	const inTree = new Uint8Array(m);
	const treeOrder = new Int32Array(n);
	let root = 0;
	for (let i = 1; i < n; i++) if (p[i] > p[root]) root = i;
	best[root] = Infinity;
	for (let k = 0; k < n; k++) {
		let v = -1;
		for (let i = 0; i < n; i++) if (!done[i] && (v < 0 || best[i] > best[v])) v = i;
		done[v] = 1;
		treeOrder[k] = v;
		if (bestStep[v] >= 0) {
			parentStep[v] = bestStep[v];
			inTree[bestStep[v]] = 1;
			parent[v] = from[bestStep[v]] === v ? to[bestStep[v]] : from[bestStep[v]];
		}
		for (let e = adjStart[v]; e < adjStart[v + 1]; e++) {
			const s = adj[e];
			const w = from[s] === v ? to[s] : from[s];
			const weight = forward[s] + backward[s];
			if (!done[w] && weight > best[w]) {
				best[w] = weight;
				bestStep[w] = s;
			}
		}
	}
	// Kirchhoff's current law, leaves first: what the chords carry out of v's subtree comes back in through the
	// tree step above v (out[·] tallies chord outflows only; tree steps inside a subtree cancel)
	const outHi = new Float64Array(n);
	const outLo = new Float64Array(n);
	const addOut = (i: number, h: number, l: number) => {
		ddAdd(outHi[i], outLo[i], h, l, u);
		outHi[i] = u[0];
		outLo[i] = u[1];
	};
	for (let s = 0; s < m; s++) {
		if (inTree[s]) continue;
		addOut(from[s], net[s], netLo[s]);
		addOut(to[s], -net[s], -netLo[s]);
	}
	for (let k = n - 1; k >= 1; k--) {
		const v = treeOrder[k];
		const s = parentStep[v];
		const w = parent[v];
		// inflow to v's subtree through s: forward along s when v is its `to`
		const sign = to[s] === v ? 1 : -1;
		net[s] = sign * outHi[v];
		netLo[s] = sign * outLo[v];
		addOut(w, outHi[v], outLo[v]);
	}
	// no cycle passes a bridge (Hill 1989): its net flux is exactly 0, not the rounding of the chord sums
	const bridge = bridges(n, m, from, to, adjStart, adj);
	for (let s = 0; s < m; s++)
		if (bridge[s]) {
			net[s] = 0;
			netLo[s] = 0;
		}
	// error estimate: rounding of the refined p (a few n·ε² relative) times the one-way fluxes, plus the final rounding
	const netAbsError = new Float64Array(m);
	const pErr = logScale ? 4 * EPS * (1 + maxAbs(logP)) : 16 * n * n * EPS * EPS;
	// a tree step's net flux is the signed sum of the chords crossing its cut: its error is at most the sum of theirs,
	// Σ over chords with an end in the subtree minus twice those with both ends in it (their lowest common ancestor is in it)
	const depth = new Int32Array(n);
	for (let k = 1; k < n; k++) depth[treeOrder[k]] = depth[parent[treeOrder[k]]] + 1;
	const ends = new Float64Array(n);
	const inside = new Float64Array(n);
	for (let s = 0; s < m; s++) {
		if (inTree[s]) continue;
		const e = pErr * (forward[s] + backward[s]) + EPS * Math.abs(net[s]);
		netAbsError[s] = e;
		ends[from[s]] += e;
		ends[to[s]] += e;
		let a = from[s];
		let b = to[s];
		while (a !== b) {
			if (depth[a] >= depth[b]) a = parent[a];
			else b = parent[b];
		}
		inside[a] += e;
	}
	for (let k = n - 1; k >= 1; k--) {
		const v = treeOrder[k];
		const s = parentStep[v];
		if (!bridge[s]) netAbsError[s] = Math.max(0, ends[v] - 2 * inside[v]) * (1 + 4 * n * EPS) + 2 * n * EPS * Math.abs(net[s]);
		ends[parent[v]] += ends[v];
		inside[parent[v]] += inside[v];
	}
	let netRelError = 0;
	for (let s = 0; s < m; s++) if (net[s] !== 0) netRelError = Math.max(netRelError, netAbsError[s] / Math.abs(net[s]));
	return { net, forward, backward, inTree, parentStep, parent, treeOrder, netRelError, netAbsError };
}

/** Steps whose removal disconnects the scheme (Tarjan's low-link, iterative, parallel steps kept apart). */
function bridges(n: number, m: number, from: Int32Array, to: Int32Array, adjStart: Int32Array, adj: Int32Array): Uint8Array {
	const isBridge = new Uint8Array(m);
	const disc = new Int32Array(n).fill(-1);
	const low = new Int32Array(n);
	const viaStep = new Int32Array(n).fill(-1);
	const next = new Int32Array(n);
	const stack: number[] = [];
	let time = 0;
	for (let r = 0; r < n; r++) {
		if (disc[r] >= 0) continue;
		disc[r] = low[r] = time++;
		next[r] = adjStart[r];
		stack.push(r);
		while (stack.length) {
			const v = stack[stack.length - 1];
			if (next[v] < adjStart[v + 1]) {
				const s = adj[next[v]++];
				if (s === viaStep[v]) continue;
				const w = from[s] === v ? to[s] : from[s];
				if (disc[w] < 0) {
					disc[w] = low[w] = time++;
					viaStep[w] = s;
					next[w] = adjStart[w];
					stack.push(w);
				} else low[v] = Math.min(low[v], disc[w]);
			} else {
				stack.pop();
				const s = viaStep[v];
				if (s >= 0) {
					const u = from[s] === v ? to[s] : from[s];
					low[u] = Math.min(low[u], low[v]);
					if (low[v] > disc[u]) isBridge[s] = 1;
				}
			}
		}
	}
	return isBridge;
}

function maxAbs(x: Float64Array): number {
	let w = 0;
	for (const v of x) if (Number.isFinite(v)) w = Math.max(w, Math.abs(v));
	return w;
}

/**
 * Net flux of every step. Given the steady state, accurate relative to each flux (see `stepFlows`); given bare
 * probabilities, the plain p_from·k+ − p_to·k− (which cancels on steps in rapid equilibrium).
 */
export function stepFluxes(table: RateTable, state: SteadyState | Float64Array): Float64Array {
	if (!(state instanceof Float64Array)) return stepFlows(table, state).net;
	const J = new Float64Array(table.m);
	for (let s = 0; s < table.m; s++) J[s] = state[table.from[s]] * table.kPlus[s] - state[table.to[s]] * table.kMinus[s];
	return J;
}
