/**
 * High-precision verification path: effective rates, the tree sums Σ_i, Σ, the steady state and Hill's
 * one-way cycle fluxes in decimal arithmetic (default 80 significant digits), by determinants of minors of L
 * with Gaussian elimination and partial pivoting — a different algorithm from the fast GTH path, and
 * accurate because the working precision dwarfs any cancellation met in double-precision schemes.
 *
 * With `motion: true` it adds every step's net flux p_from·k+ − p_to·k−, and V and D from the characteristic
 * polynomial P(λ, χ) = det(λ·I − M(χ)) of the tilted generator: λ(χ) is its root with λ(0) = 0, V = λ'(0),
 * D = λ''(0)/2 by implicit differentiation, the partial derivatives of P by central differences, which the
 * working precision (40 digits more than asked) makes exact to about half of it. A different route from the fast
 * path's Poisson solve.
 *
 * Source: Markov chain tree theorem (Kirchhoff; Tutte; King & Altman 1956; Hill 1966) and all-minors form
 * (Chaiken 1982) [pub]; V and D from the characteristic polynomial of the tilted generator: Koza 1999,
 * J Phys A 32:7637 [pub]; decimal.js arbitrary-precision arithmetic.
 * Cost: O(n⁴) for all Σ_i plus O(m³) per cycle, 9 determinants of order n for V and D, each operation a
 * multi-digit decimal one (slow; for checks).
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
	/** with `motion`: net flux of every step, mean velocity (nm/s) and diffusion coefficient (nm²/s); else empty/null */
	netFlux: Decimal[];
	velocity: Decimal | null;
	diffusion: Decimal | null;
}

export const PRECISE_DEFAULTS = { precision: 80, motion: false };

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
	const { precision, motion } = { ...PRECISE_DEFAULTS, ...options };
	// central differences of the characteristic polynomial cost half the digits: carry 40 more
	const D = Decimal.clone({ precision: motion ? precision + 40 : precision, toExpNeg: -9e15, toExpPos: 9e15 });
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
	const netFlux: Decimal[] = [];
	let velocity: Decimal | null = null;
	let diffusion: Decimal | null = null;
	if (motion) {
		scheme.steps.forEach((step, s) => {
			netFlux.push(probabilities[index.get(step.from)!].mul(kPlus[s]).sub(probabilities[index.get(step.to)!].mul(kMinus[s])));
		});
		({ velocity, diffusion } = tiltedRoot(D, scheme, index, kPlus, kMinus, out));
	}
	return { D, kPlus, kMinus, treeSums, sigma, probabilities, forwardFlux, backwardFlux, netFlux, velocity, diffusion };
}

/** λ'(0) and λ''(0)/2 of the root λ(χ) of det(λ·I − M(χ)) through λ(0) = 0 (Koza 1999) [pub]. */
function tiltedRoot(
	D: typeof Decimal,
	scheme: Scheme,
	index: Map<string, number>,
	kPlus: Decimal[],
	kMinus: Decimal[],
	out: Decimal[]
): { velocity: Decimal; diffusion: Decimal } {
	const n = scheme.states.length;
	let rateScale = new D(0);
	for (const o of out) if (o.gt(rateScale)) rateScale = o;
	let dScale = 0;
	for (const st of scheme.steps) dScale = Math.max(dScale, Math.abs(st.displacementNm));
	if (dScale === 0 || rateScale.isZero()) return { velocity: new D(0), diffusion: new D(0) };
	// steps of 10^(−digits/4) of the natural scales keep truncation and rounding errors both near 10^(−digits/2)
	const h = new D(10).pow(-Math.floor(D.precision / 4));
	const hl = h.mul(rateScale);
	const hc = h.div(dScale);
	const P = (lambda: Decimal, chi: Decimal) => {
		const M = Array.from({ length: n }, (_, i) =>
			Array.from({ length: n }, (_, j) => (i === j ? lambda.add(out[i]) : new D(0)))
		);
		scheme.steps.forEach((st, s) => {
			const a = index.get(st.from)!;
			const b = index.get(st.to)!;
			const tilt = chi.mul(st.displacementNm).exp();
			M[a][b] = M[a][b].sub(kPlus[s].mul(tilt));
			M[b][a] = M[b][a].sub(kMinus[s].div(tilt));
		});
		return determinant(D, M);
	};
	const z = new D(0);
	const p0 = P(z, z);
	const pl = P(hl, z);
	const ml = P(hl.neg(), z);
	const pc = P(z, hc);
	const mc = P(z, hc.neg());
	const Pl = pl.sub(ml).div(hl.mul(2));
	const Pc = pc.sub(mc).div(hc.mul(2));
	const Pll = pl.sub(p0.mul(2)).add(ml).div(hl.mul(hl));
	const Pcc = pc.sub(p0.mul(2)).add(mc).div(hc.mul(hc));
	const Plc = P(hl, hc).sub(P(hl, hc.neg())).sub(P(hl.neg(), hc)).add(P(hl.neg(), hc.neg())).div(hl.mul(hc).mul(4));
	const v = Pc.neg().div(Pl);
	const second = Pcc.add(Plc.mul(v).mul(2)).add(Pll.mul(v).mul(v)).neg().div(Pl);
	return { velocity: v, diffusion: second.div(2) };
}
