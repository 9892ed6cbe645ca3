/**
 * GTH elimination: the steady state of a continuous-time Markov chain, the tree sums Σ_root and Σ of the
 * Markov chain tree theorem, Poisson solves L·r = c with the same factors, and subtraction-free
 * determinants of L restricted to a subset of states (Σ_κ of Hill's cycle fluxes).
 *
 * Source: Grassmann, Taksar & Heyman 1985, Oper Res 33:1107 [pub]; accuracy O'Cinneide 1993, Numer Math 65:109 [pub];
 * restricted determinants as spanning-forest sums: Chaiken 1982, SIAM J Alg Disc Meth 3:319 [pub];
 * pivot product = Σ_root because every elimination is a Schur complement that stays a Laplacian [der].
 * Cost: O(n³) to factor (zero entries skipped), O(n²) per stationary vector or Poisson solve,
 * O(|S|³) per restricted determinant.
 * Invariants: input K is n×n row-major with K_ij ≥ 0 (zero diagonal ignored); the root lies in the unique
 * closed class, so every pivot is > 0 and no subtraction ever occurs in pivots or probabilities.
 */
import { EngineError } from './scheme';

export interface GthFactor {
	n: number;
	/** order[0] is the root (never eliminated); states are eliminated from order[n−1] down to order[1]. */
	order: Int32Array;
	/** reduced matrix in elimination coordinates, row-major */
	a: Float64Array;
	/** pivot[k] = out-rate of order[k] in the chain reduced to positions 0..k (pivot[0] unused) */
	pivot: Float64Array;
}

function reach(K: Float64Array, n: number, start: number, reverse: boolean): Uint8Array {
	const seen = new Uint8Array(n);
	const stack = [start];
	seen[start] = 1;
	while (stack.length) {
		const i = stack.pop()!;
		for (let j = 0; j < n; j++) {
			if (seen[j]) continue;
			if ((reverse ? K[j * n + i] : K[i * n + j]) > 0) {
				seen[j] = 1;
				stack.push(j);
			}
		}
	}
	return seen;
}

/**
 * A state of the unique closed communicating class (every state reaches it through nonzero rates).
 * Throws when the closed class is not unique (the steady state would depend on the start).
 */
export function closedClassRoot(K: Float64Array, n: number): number {
	let v = 0;
	for (;;) {
		const forward = reach(K, n, v, false);
		const back = reach(K, n, v, true);
		let escape = -1;
		for (let u = 0; u < n; u++)
			if (forward[u] && !back[u]) {
				escape = u;
				break;
			}
		if (escape < 0) {
			for (let u = 0; u < n; u++)
				if (!back[u])
					throw new EngineError(
						'gth',
						`the steady state is not unique: state #${u} can never reach state #${v} through nonzero rates; make a zero rate that cuts them apart positive`
					);
			return v;
		}
		v = escape;
	}
}

export function gthFactor(K: Float64Array, n: number, root = closedClassRoot(K, n)): GthFactor {
	const order = new Int32Array(n);
	order[0] = root;
	for (let i = 0, k = 1; i < n; i++) if (i !== root) order[k++] = i;
	const a = new Float64Array(n * n);
	for (let i = 0; i < n; i++) {
		const oi = order[i] * n;
		for (let j = 0; j < n; j++) a[i * n + j] = i === j ? 0 : K[oi + order[j]];
	}
	const pivot = new Float64Array(n);
	for (let k = n - 1; k >= 1; k--) {
		const rowK = k * n;
		let s = 0;
		for (let j = 0; j < k; j++) s += a[rowK + j];
		if (!(s > 0))
			throw new EngineError('gth', `state #${order[k]} has no way out in the reduced chain; check its zero rates`);
		pivot[k] = s;
		for (let i = 0; i < k; i++) {
			const aik = a[i * n + k];
			if (aik === 0) continue;
			const f = aik / s;
			const rowI = i * n;
			// the diagonal is updated too but never read: no branch in the hot loop
			for (let j = 0; j < k; j++) a[rowI + j] += f * a[rowK + j];
		}
	}
	return { n, order, a, pivot };
}

/** Unnormalised stationary weights in elimination coordinates (x[0] = 1). */
function stationaryWeights(f: GthFactor): Float64Array {
	const { n, a, pivot } = f;
	const x = new Float64Array(n);
	x[0] = 1;
	for (let k = 1; k < n; k++) {
		let t = 0;
		for (let i = 0; i < k; i++) t += x[i] * a[i * n + k];
		x[k] = t / pivot[k];
	}
	return x;
}

/** Steady-state probabilities p (p·L = 0, Σp = 1) in the original state order. */
export function stationary(f: GthFactor): Float64Array {
	const x = stationaryWeights(f);
	let total = 0;
	for (let k = 0; k < f.n; k++) total += x[k];
	const p = new Float64Array(f.n);
	for (let k = 0; k < f.n; k++) p[f.order[k]] = x[k] / total;
	return p;
}

/** ln Σ_root (product of the pivots) — the weight sum of spanning trees directed into the root. */
export function logRootTreeSum(f: GthFactor): number {
	let t = 0;
	for (let k = 1; k < f.n; k++) t += Math.log(f.pivot[k]);
	return t;
}

/** ln Σ, Σ = Σ_i Σ_i the total weight of directed spanning trees, from Σ_root / p_root. */
export function logTreeSum(f: GthFactor, p: Float64Array): number {
	return logRootTreeSum(f) - Math.log(p[f.order[0]]);
}

/**
 * Solves L·r = c (L = diag(out-rates) − K) for a right side with p·c = 0, returning the solution with
 * r_root = 0 (add any constant). Original state order in and out.
 */
export function solvePoisson(f: GthFactor, c: Float64Array): Float64Array {
	const { n, a, pivot, order } = f;
	const b = new Float64Array(n);
	for (let k = 0; k < n; k++) b[k] = c[order[k]];
	for (let k = n - 1; k >= 1; k--) {
		const ck = b[k] / pivot[k];
		if (ck === 0) continue;
		for (let i = 0; i < k; i++) b[i] += a[i * n + k] * ck;
	}
	const y = new Float64Array(n);
	for (let k = 1; k < n; k++) {
		let t = b[k];
		const rowK = k * n;
		for (let j = 1; j < k; j++) t += a[rowK + j] * y[j];
		y[k] = t / pivot[k];
	}
	const r = new Float64Array(n);
	for (let k = 0; k < n; k++) r[order[k]] = y[k];
	return r;
}

/** Scratch space for repeated restricted determinants on one chain. */
export interface RestrictedDetWorkspace {
	b: Float64Array;
	sink: Float64Array;
	inSet: Uint8Array;
	members: Int32Array;
}

export function restrictedDetWorkspace(n: number): RestrictedDetWorkspace {
	return {
		b: new Float64Array(n * n),
		sink: new Float64Array(n),
		inSet: new Uint8Array(n),
		members: new Int32Array(n)
	};
}

/**
 * ln det(L restricted to the states NOT in `absorbing`) — the weight of spanning forests directed into
 * the absorbing set — by GTH-style elimination: the absorbing set is one lumped sink, every pivot is a sum
 * of nonnegative reduced rates. Returns 0 (det = 1) when no state is left and −Infinity when the determinant is 0.
 */
export function logRestrictedDet(
	K: Float64Array,
	n: number,
	absorbing: ArrayLike<number>,
	ws: RestrictedDetWorkspace = restrictedDetWorkspace(n)
): number {
	const { b, sink, inSet, members } = ws;
	inSet.fill(0);
	for (let t = 0; t < absorbing.length; t++) inSet[absorbing[t]] = 1;
	let m = 0;
	for (let i = 0; i < n; i++) if (!inSet[i]) members[m++] = i;
	if (m === 0) return 0;
	for (let i = 0; i < m; i++) {
		const row = members[i] * n;
		let toSink = 0;
		for (let j = 0; j < n; j++) if (inSet[j]) toSink += K[row + j];
		sink[i] = toSink;
		for (let j = 0; j < m; j++) b[i * m + j] = i === j ? 0 : K[row + members[j]];
	}
	let logDet = 0;
	for (let k = m - 1; k >= 0; k--) {
		const rowK = k * m;
		let s = sink[k];
		for (let j = 0; j < k; j++) s += b[rowK + j];
		if (!(s > 0)) return -Infinity;
		logDet += Math.log(s);
		for (let i = 0; i < k; i++) {
			const bik = b[i * m + k];
			if (bik === 0) continue;
			const f = bik / s;
			const rowI = i * m;
			for (let j = 0; j < k; j++) if (j !== i) b[rowI + j] += f * b[rowK + j];
			sink[i] += f * sink[k];
		}
	}
	return logDet;
}
