/**
 * GTH elimination: the steady state of a continuous-time Markov chain, the tree sums Σ_root and Σ of the
 * Markov chain tree theorem, Poisson solves L·r = c with the same factors, and subtraction-free
 * determinants of L restricted to a subset of states (Σ_κ of Hill's cycle fluxes).
 *
 * Source: Grassmann, Taksar & Heyman 1985, Oper Res 33:1107 [pub]; accuracy O'Cinneide 1993, Numer Math 65:109 [pub];
 * restricted determinants as spanning-forest sums: Chaiken 1982, SIAM J Alg Disc Meth 3:319 [pub];
 * pivot product = Σ_root because every elimination is a Schur complement that stays a Laplacian [der].
 * Cost: O(n³) to factor (zero entries skipped), O(n²) per stationary vector, Poisson solve or left solve
 * x·L = b (iterative refinement of p), O(|S|³) per restricted determinant. Where probabilities leave the double
 * range (p < 1e-280) the same elimination runs on logarithms of the reduced rates (every quantity is a sum of
 * positive terms, so log-sum-exp is exact to rounding) [der]: O(n³) exp/log, used only then.
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

/** Below this a stationary weight or pivot may have lost digits to underflow: redo the elimination on logs. */
const RANGE_LOW = 1e-280;
const RANGE_HIGH = 1e280;

/**
 * Steady-state probabilities as `stationary`, or null when the double-precision weights cannot be trusted to full
 * relative accuracy: a state of the closed class (reachable from the root) got a weight outside [1e-280, 1e280] or
 * zero, or a pivot did. Then use `logStationary`.
 */
export function stationaryInRange(K: Float64Array, f: GthFactor): Float64Array | null {
	const x = stationaryWeights(f);
	let reachable: Uint8Array | null = null;
	for (let k = 1; k < f.n; k++) {
		if (!(f.pivot[k] > RANGE_LOW && f.pivot[k] < RANGE_HIGH)) return null;
		if (!(x[k] > RANGE_LOW && x[k] < RANGE_HIGH)) {
			// a zero weight is exact for a transient state (outside the closed class), an underflow otherwise
			reachable ??= reach(K, f.n, f.order[0], false);
			if (reachable[f.order[k]]) return null;
		}
	}
	let total = 0;
	for (let k = 0; k < f.n; k++) total += x[k];
	const p = new Float64Array(f.n);
	for (let k = 0; k < f.n; k++) p[f.order[k]] = x[k] / total;
	return p;
}

/** ln(e^a + e^b) without overflow; −Infinity stands for 0. */
function logAdd(a: number, b: number): number {
	if (a === -Infinity) return b;
	if (b === -Infinity) return a;
	return a > b ? a + Math.log1p(Math.exp(b - a)) : b + Math.log1p(Math.exp(a - b));
}

/**
 * Natural logs of the steady-state probabilities (−Infinity for a transient state) by GTH elimination on the
 * logarithms of the rates: the same sums of positive terms as `gthFactor` and `stationary`, never under- or
 * overflowing. Also returns ln Σ_root (the sum of the log pivots).
 */
export function logStationary(K: Float64Array, n: number, root = closedClassRoot(K, n)): { logP: Float64Array; logRootTreeSum: number } {
	const order = new Int32Array(n);
	order[0] = root;
	for (let i = 0, k = 1; i < n; i++) if (i !== root) order[k++] = i;
	const la = new Float64Array(n * n);
	for (let i = 0; i < n; i++) {
		const oi = order[i] * n;
		for (let j = 0; j < n; j++) la[i * n + j] = i === j ? -Infinity : Math.log(K[oi + order[j]]);
	}
	const lpivot = new Float64Array(n);
	let logRoot = 0;
	for (let k = n - 1; k >= 1; k--) {
		const rowK = k * n;
		let s = -Infinity;
		for (let j = 0; j < k; j++) s = logAdd(s, la[rowK + j]);
		if (s === -Infinity)
			throw new EngineError('gth', `state #${order[k]} has no way out in the reduced chain; check its zero rates`);
		lpivot[k] = s;
		logRoot += s;
		for (let i = 0; i < k; i++) {
			const lik = la[i * n + k];
			if (lik === -Infinity) continue;
			const f = lik - s;
			const rowI = i * n;
			for (let j = 0; j < k; j++) if (j !== i && la[rowK + j] !== -Infinity) la[rowI + j] = logAdd(la[rowI + j], f + la[rowK + j]);
		}
	}
	const lx = new Float64Array(n);
	lx[0] = 0;
	for (let k = 1; k < n; k++) {
		let t = -Infinity;
		for (let i = 0; i < k; i++) if (lx[i] !== -Infinity) t = logAdd(t, lx[i] + la[i * n + k]);
		lx[k] = t === -Infinity ? t : t - lpivot[k];
	}
	let total = -Infinity;
	for (let k = 0; k < n; k++) total = logAdd(total, lx[k]);
	const logP = new Float64Array(n);
	for (let k = 0; k < n; k++) logP[order[k]] = lx[k] - total;
	return { logP, logRootTreeSum: logRoot };
}

/**
 * Solves x·L = b (L = diag(out-rates) − K) for a right side with b·1 = 0, returning the solution with
 * x_root = 0 (add any multiple of p). The transpose of `solvePoisson` with the same factors; it serves the
 * iterative refinement of p with residuals in double-double. Original state order in and out.
 */
export function solveLeft(f: GthFactor, b: Float64Array): Float64Array {
	const { n, a, pivot, order } = f;
	const c = new Float64Array(n);
	for (let k = 0; k < n; k++) c[k] = b[order[k]];
	for (let k = n - 1; k >= 1; k--) {
		const ck = c[k] / pivot[k];
		if (ck === 0) continue;
		const rowK = k * n;
		for (let j = 0; j < k; j++) c[j] += a[rowK + j] * ck;
	}
	const y = new Float64Array(n);
	for (let k = 1; k < n; k++) {
		let t = c[k];
		for (let i = 1; i < k; i++) t += y[i] * a[i * n + k];
		y[k] = t / pivot[k];
	}
	const x = new Float64Array(n);
	for (let k = 0; k < n; k++) x[order[k]] = y[k];
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
