/**
 * High-precision verification path: effective rates, the tree sums Σ_i, Σ, the steady state and Hill's
 * one-way cycle fluxes in decimal arithmetic (default 80 significant digits), by determinants of minors of L
 * with Gaussian elimination and partial pivoting — a different algorithm from the fast GTH path, and
 * accurate because the working precision dwarfs any cancellation met in double-precision schemes.
 *
 * Source: Markov chain tree theorem (Kirchhoff; Tutte; King & Altman 1956; Hill 1966) and all-minors form
 * (Chaiken 1982) [pub]; decimal.js arbitrary-precision arithmetic.
 * Cost: O(n⁴) for all Σ_i plus O(m³) per cycle, each operation a multi-digit decimal one (slow; for checks).
 * Invariants: uses CODATA kB exactly; returns Decimal values; p sums to 1 to the working precision.
 */
import Decimal from 'decimal.js';
import type { Cycle } from './cycles';
import type { Scheme } from './scheme';
import { BOLTZMANN_J_PER_K } from './units';

export interface PreciseResult {
	D: typeof Decimal;
	kPlus: Decimal[];
	kMinus: Decimal[];
	treeSums: Decimal[];
	sigma: Decimal;
	probabilities: Decimal[];
	forwardFlux: Decimal[];
	backwardFlux: Decimal[];
}

export const PRECISE_DEFAULTS = { precision: 80 };

/** det of a square matrix (array of rows) by elimination with partial pivoting; destroys the input. */
function determinant(D: typeof Decimal, M: Decimal[][]): Decimal {
	const k = M.length;
	let det = new D(1);
	for (let c = 0; c < k; c++) {
		let best = c;
		for (let i = c + 1; i < k; i++) if (M[i][c].abs().gt(M[best][c].abs())) best = i;
		if (M[best][c].isZero()) return new D(0);
		if (best !== c) {
			[M[best], M[c]] = [M[c], M[best]];
			det = det.neg();
		}
		det = det.mul(M[c][c]);
		for (let i = c + 1; i < k; i++) {
			if (M[i][c].isZero()) continue;
			const f = M[i][c].div(M[c][c]);
			for (let j = c + 1; j < k; j++) M[i][j] = M[i][j].sub(f.mul(M[c][j]));
		}
	}
	return det;
}

export function preciseAnalysis(
	scheme: Scheme,
	cycles: readonly Cycle[] = [],
	options: Partial<typeof PRECISE_DEFAULTS> = {}
): PreciseResult {
	const { precision } = { ...PRECISE_DEFAULTS, ...options };
	const D = Decimal.clone({ precision, toExpNeg: -9e15, toExpPos: 9e15 });
	const n = scheme.states.length;
	const index = new Map(scheme.states.map((s, i) => [s.id, i]));
	const kT = new D(BOLTZMANN_J_PER_K).mul(scheme.temperatureK).mul('1e21');
	const F = new D(scheme.forcePN);
	const conc = (x: string) => new D(scheme.concentrationsM[x]);
	const kPlus: Decimal[] = [];
	const kMinus: Decimal[] = [];
	const K: Decimal[][] = Array.from({ length: n }, () => Array.from({ length: n }, () => new D(0)));
	for (const step of scheme.steps) {
		const work = F.mul(step.displacementNm).div(kT);
		let kp = new D(step.kForward).mul(work.mul(step.loadFraction).neg().exp());
		for (const x of step.binds) kp = kp.mul(conc(x));
		let km = new D(step.kBackward).mul(work.mul(new D(1).sub(step.loadFraction)).exp());
		for (const x of step.releases) km = km.mul(conc(x));
		kPlus.push(kp);
		kMinus.push(km);
		const a = index.get(step.from)!;
		const b = index.get(step.to)!;
		K[a][b] = K[a][b].add(kp);
		K[b][a] = K[b][a].add(km);
	}
	const out = K.map((row) => row.reduce((t, v) => t.add(v), new D(0)));
	/** det of L restricted to `keep` (L = diag(out) − K) */
	const minor = (keep: number[]) =>
		determinant(
			D,
			keep.map((i) => keep.map((j) => (i === j ? out[i] : K[i][j].neg())))
		);
	const all = [...Array(n).keys()];
	const treeSums = all.map((i) => minor(all.filter((j) => j !== i)));
	const sigma = treeSums.reduce((t, v) => t.add(v), new D(0));
	const probabilities = treeSums.map((t) => t.div(sigma));
	const forwardFlux: Decimal[] = [];
	const backwardFlux: Decimal[] = [];
	for (const cycle of cycles) {
		const on = new Set(cycle.states);
		const sk = on.size === n ? new D(1) : minor(all.filter((j) => !on.has(j)));
		let up = new D(1);
		let down = new D(1);
		for (const { step, direction } of cycle.steps) {
			up = up.mul(direction === 1 ? kPlus[step] : kMinus[step]);
			down = down.mul(direction === 1 ? kMinus[step] : kPlus[step]);
		}
		forwardFlux.push(up.mul(sk).div(sigma));
		backwardFlux.push(down.mul(sk).div(sigma));
	}
	return { D, kPlus, kMinus, treeSums, sigma, probabilities, forwardFlux, backwardFlux };
}
