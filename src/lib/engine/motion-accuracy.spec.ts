/**
 * Accuracy of V, D, step net fluxes and the entropy production where one-way fluxes dwarf the net flux
 * (rapid-equilibrium substeps, dead ends), physical bounds, and probabilities below the double range.
 * References outside the fast path: closed forms of Derrida 1983 / Fisher & Kolomeisky 1999 in decimal.js, and the
 * 80-digit decimal path (precise.ts: tree theorem for p, Koza's characteristic polynomial for V and D).
 */
import Decimal from 'decimal.js';
import { describe, expect, it } from 'vitest';
import { auditScheme } from './audit';
import { observables, velocityAt, velocityWithError } from './observables';
import { preciseAnalysis } from './precise';
import { effectiveRates } from './rates';
import { mulberry32, plainScheme, plainStep, randomScheme } from './random-scheme';
import type { Scheme, SchemeStep } from './scheme';
import { steadyState, stepFluxes } from './steady-state';

const X = Decimal.clone({ precision: 60 });
const rel = (a: number, b: Decimal | number) => {
	const ref = new X(b);
	return ref.isZero() ? Math.abs(a) : new X(a).sub(ref).div(ref).abs().toNumber();
};

/** Two states per period: step a 0 → 1 (u0 forward, w1 back), step b 1 → 0 of the next period (u1, w0). */
function twoState(u0: number, w1: number, u1: number, w0: number, d: number, f: number): Scheme {
	return {
		...plainScheme('two-state periodic', ['0', '1'], [plainStep('a', '0', '1', u0, w1, d * f), plainStep('b', '1', '0', u1, w0, d * (1 - f))]),
		stepSizeNm: d
	};
}

/** V = d(u0u1 − w0w1)/S, D = d²/(2S)·[u0u1 + w0w1 − 2(V/d)²] — Derrida 1983; Fisher & Kolomeisky 1999 [pub], in 60 digits. */
function twoStateClosedForm(u0: number, w1: number, u1: number, w0: number, d: number) {
	const [U0, W1, U1, W0] = [u0, w1, u1, w0].map((x) => new X(x));
	const S = U0.add(U1).add(W0).add(W1);
	const V = U0.mul(U1).sub(W0.mul(W1)).mul(d).div(S);
	const D = new X(d * d).div(S.mul(2)).mul(U0.mul(U1).add(W0.mul(W1)).sub(V.div(d).pow(2).mul(2)));
	return { V, D };
}

/** N-state unicycle, state j → j+1 with u_j, j+1 → j with w_{j+1}; displacement d/N per step unless given. */
function unicycle(u: number[], w: number[], d: number, displacement?: number[]): Scheme {
	const N = u.length;
	const ids = u.map((_, j) => `S${j}`);
	const steps = u.map((uj, j) => plainStep(`s${j}`, ids[j], ids[(j + 1) % N], uj, w[(j + 1) % N], displacement ? displacement[j] : d / N));
	return { ...plainScheme(`unicycle ${N}`, ids, steps), stepSizeNm: d };
}

/**
 * Derrida's N-state periodic V and D in 60 digits (sites per period N, period d):
 * r_j = (1/u_j)[1 + Σ_{k=1}^{N−1} Π_{i=1}^{k} w_{j+i}/u_{j+i}], s_j = (1/u_j)[1 + Σ_{k=1}^{N−1} Π_{i=1}^{k} w_{j+1−i}/u_{j−i}],
 * R = Σ r_j; V_site = N(1 − Π w_j/u_j)/R; D_site = [V_site Σ_j s_j Σ_i (i+1) r_{j+i+1} + N Σ_j u_j r_j s_j]/R² − V_site(N+2)/2;
 * V = V_site·d/N, D = D_site·(d/N)². Derrida 1983, J Stat Phys 31:433 [pub] (written from memory [mem]; it agrees with
 * the characteristic-polynomial path of precise.ts to 40 digits, Koza 1999 [pub]).
 */
function derrida(u: number[], w: number[], period: number | Decimal) {
	const d = new X(period);
	const N = u.length;
	const U = u.map((x) => new X(x));
	const W = w.map((x) => new X(x));
	const at = (j: number) => ((j % N) + N) % N;
	const r = U.map((uj, j) => {
		let t = new X(1);
		let pr = new X(1);
		for (let k = 1; k < N; k++) t = t.add((pr = pr.mul(W[at(j + k)]).div(U[at(j + k)])));
		return t.div(uj);
	});
	const s = U.map((uj, j) => {
		let t = new X(1);
		let pr = new X(1);
		for (let k = 1; k < N; k++) t = t.add((pr = pr.mul(W[at(j - k + 1)]).div(U[at(j - k)])));
		return t.div(uj);
	});
	const R = r.reduce((a, b) => a.add(b), new X(0));
	let prod = new X(1);
	for (let j = 0; j < N; j++) prod = prod.mul(W[j]).div(U[j]);
	const Vs = new X(N).mul(new X(1).sub(prod)).div(R);
	let A = new X(0);
	let B = new X(0);
	for (let j = 0; j < N; j++) {
		for (let i = 0; i < N; i++) A = A.add(s[j].mul(i + 1).mul(r[at(i + j + 1)]));
		B = B.add(U[j].mul(r[j]).mul(s[j]));
	}
	const Ds = Vs.mul(A).add(B.mul(N)).div(R.pow(2)).sub(Vs.mul(N + 2).div(2));
	return { V: Vs.mul(d).div(N), D: Ds.mul(d.pow(2)).div(N * N) };
}

describe('V and D where a substep is in rapid equilibrium — Derrida 1983; Fisher & Kolomeisky 1999 [pub]', () => {
	it.each([
		{ u0: 1e16, w1: 1e16, u1: 10, w0: 1 },
		{ u0: 1e16, w1: 3e15, u1: 10, w0: 1 },
		{ u0: 1e12, w1: 5e11, u1: 3, w0: 0.2 },
		{ u0: 7, w1: 2, u1: 1e15, w0: 9e14 }
	])('regression: a fast substep carrying part of the displacement (D was 9 % off, V 5 %): u0=$u0 w1=$w1 u1=$u1 w0=$w0', ({ u0, w1, u1, w0 }) => {
		const d = 8;
		const ref = twoStateClosedForm(u0, w1, u1, w0, d);
		for (const f of [0, 0.25, 0.5, 1]) {
			const o = observables(twoState(u0, w1, u1, w0, d, f));
			expect(rel(o.velocityNmPerS, ref.V)).toBeLessThan(1e-13);
			expect(rel(o.diffusionNm2PerS, ref.D)).toBeLessThan(1e-13);
			// the reported accuracy is honest: it bounds the true error and is itself small
			expect(rel(o.velocityNmPerS, ref.V)).toBeLessThanOrEqual(o.accuracy.velocityRelError! + 1e-16);
			expect(o.accuracy.velocityRelError!).toBeLessThan(1e-12);
		}
	});

	it('regression: both step net fluxes equal V/d, the flux balance the plain p·k+ − p·k− broke', () => {
		const u0 = 1e16;
		const w1 = 1e16;
		const s = twoState(u0, w1, 10, 1, 8, 0.5);
		const table = effectiveRates(s);
		const J = stepFluxes(table, steadyState(table));
		const { V } = twoStateClosedForm(u0, w1, 10, 1, 8);
		for (const j of J) expect(rel(j, V.div(8))).toBeLessThan(1e-14);
	});

	const rand = mulberry32(2026);
	const stiffRate = () => 10 ** (-4 + 20 * rand());
	const cases = [3, 5, 8, 13, 25].map((N) => {
		const u = Array.from({ length: N }, stiffRate);
		const w = Array.from({ length: N }, stiffRate);
		return { N, u, w };
	});
	it.each(cases)('N = $N states per period, rates 1e-4 … 1e16 /s, displacement on every step', ({ u, w }) => {
		const d = 8;
		const ref = derrida(u, w, d);
		const o = observables(unicycle(u, w, d));
		expect(rel(o.velocityNmPerS, ref.V)).toBeLessThan(1e-12);
		expect(rel(o.diffusionNm2PerS, ref.D)).toBeLessThan(1e-12);
	});

	it('the 80-digit reference path (Koza 1999 [pub]) itself agrees with Derrida’s closed form to 1e-30', () => {
		for (const { u, w } of cases.slice(0, 3)) {
			const ref = derrida(u, w, 8);
			const precise = preciseAnalysis(unicycle(u, w, 8, u.map(() => 8 / u.length)), [], { motion: true });
			// the displacements 8/N are doubles: compare with the period they actually add up to
			const period = u.map(() => 8 / u.length).reduce((t, x) => t.add(x), new X(0));
			const scaled = derrida(u, w, period);
			expect(precise.velocity!.div(scaled.V).sub(1).abs().toNumber()).toBeLessThan(1e-30);
			expect(precise.diffusion!.div(scaled.D).sub(1).abs().toNumber()).toBeLessThan(1e-30);
			expect(ref.V.isZero()).toBe(false);
		}
	});

	it('N = 25 with a mix of near-equilibrium fast substeps and one slow driven step', () => {
		const N = 25;
		const u = Array.from({ length: N }, (_, j) => (j === 7 ? 3 : 1e15 * (1 + j)));
		const w = Array.from({ length: N }, (_, j) => (j === 8 ? 0.5 : 1e15 * (1 + ((j + N - 1) % N)) * 0.999));
		const ref = derrida(u, w, 36);
		const o = observables(unicycle(u, w, 36));
		expect(rel(o.velocityNmPerS, ref.V)).toBeLessThan(1e-12);
		expect(rel(o.diffusionNm2PerS, ref.D)).toBeLessThan(1e-12);
	});
});

/** A driven 4-state cycle with a dead-end state hanging off S0 through a fast step that carries displacement. */
function deadEnd(fast: number): Scheme {
	const steps: SchemeStep[] = [
		plainStep('c0', 'S0', 'S1', 200, 3, 2),
		plainStep('c1', 'S1', 'S2', 90, 7, 2),
		plainStep('c2', 'S2', 'S3', 400, 1, 2),
		plainStep('c3', 'S3', 'S0', 50, 2, 2),
		plainStep('dead', 'S0', 'X', fast, 0.37 * fast, 5)
	];
	return { ...plainScheme('dead end', ['S0', 'S1', 'S2', 'S3', 'X'], steps), stepSizeNm: 8 };
}

describe('dead ends and stiff random schemes against the 80-digit path (Koza 1999; tree theorem) [pub]', () => {
	it.each([1e6, 1e12, 1e16])('regression: a dead end at %d /s has net flux exactly 0 and leaves V and D alone', (fast) => {
		const s = deadEnd(fast);
		const table = effectiveRates(s);
		const J = stepFluxes(table, steadyState(table));
		expect(J[4]).toBe(0); // no cycle passes through a dead end: Kirchhoff's current law [pub]
		const precise = preciseAnalysis(s, [], { motion: true });
		const o = observables(s);
		expect(rel(o.velocityNmPerS, precise.velocity!)).toBeLessThan(1e-13);
		expect(rel(o.diffusionNm2PerS, precise.diffusion!)).toBeLessThan(1e-12);
		for (let k = 0; k < 4; k++) expect(rel(J[k], precise.netFlux[k])).toBeLessThan(1e-13);
	});

	/** Adversarial: every other step in rapid equilibrium (1e14…1e16 /s, nearly balanced), the rest slow and driven. */
	function stiffRandom(seed: number): Scheme {
		const rand = mulberry32(seed);
		const s = randomScheme({ states: 6 + (seed % 3), steps: 10 + (seed % 4), seed, displacements: true, log10Rates: [-2, 3] });
		s.steps = s.steps.map((st, i) => {
			if (i % 2) return st;
			const k = 10 ** (14 + 2 * rand());
			return { ...st, kForward: k, kBackward: k * (0.5 + rand()) };
		});
		return s;
	}

	it.each([1, 2, 3, 4, 5, 6])('seed %i: V, D and every net flux to 1e-12 relative, within the reported accuracy', (seed) => {
		const s = stiffRandom(seed);
		const precise = preciseAnalysis(s, [], { motion: true });
		const table = effectiveRates(s);
		const ss = steadyState(table);
		const J = stepFluxes(table, ss);
		const o = observables(s);
		expect(rel(o.velocityNmPerS, precise.velocity!)).toBeLessThan(1e-12);
		// the error V reports (for searches over load) bounds its true error
		const { velocity, velocityError } = velocityWithError(table, ss);
		expect(Math.abs(precise.velocity!.sub(velocity).toNumber())).toBeLessThanOrEqual(velocityError);
		expect(rel(o.diffusionNm2PerS, precise.diffusion!)).toBeLessThan(1e-12);
		precise.netFlux.forEach((ref, k) => {
			const oneWay = precise.probabilities[table.from[k]].mul(precise.kPlus[k]);
			// a true zero (no cycle through the step) shows in 120 digits as rounding far below the one-way flux
			if (ref.abs().lt(oneWay.mul(1e-60))) return expect(J[k]).toBe(0);
			const err = rel(J[k], ref);
			expect(err).toBeLessThan(1e-11);
			expect(err).toBeLessThanOrEqual(o.accuracy.netFluxRelError + 1e-15);
		});
	});
});

describe('physical bounds by construction', () => {
	it('regression: V = D = 0 exactly when no cycle moves the motor (was D = −2.3e-10, randomness −2.0)', () => {
		// displacements that cancel around every cycle: a potential difference, d_s = φ_to − φ_from [der]
		const s = randomScheme({ states: 7, steps: 13, seed: 5, log10Rates: [-3, 9] });
		const phi = s.states.map((_, i) => 0.7 * i * i - 3 * i);
		s.steps = s.steps.map((st) => ({ ...st, displacementNm: phi[Number(st.to.slice(1))] - phi[Number(st.from.slice(1))] }));
		s.stepSizeNm = 8;
		const o = observables(s);
		expect(o.velocityNmPerS).toBe(0);
		expect(o.diffusionNm2PerS).toBe(0);
		expect(o.randomness).toBeNull();
		expect(o.randomnessReason).toMatch(/velocity is zero/);
	});

	it('regression: at detailed balance V is 0, randomness null with its reason, entropy production ≥ 0 (was 4.9e16 and −5e-32)', () => {
		for (let seed = 1; seed <= 8; seed++) {
			// rates from state energies: k+/k− = exp(G_from − G_to) on every step (Hill 1989) [pub]
			const rand = mulberry32(seed);
			const s = randomScheme({ states: 8, steps: 14, seed, displacements: true, log10Rates: [-2, 12] });
			const G = s.states.map(() => 20 * rand() - 10);
			s.steps = s.steps.map((st) => ({
				...st,
				kBackward: st.kForward * Math.exp(G[Number(st.to.slice(1))] - G[Number(st.from.slice(1))])
			}));
			s.stepSizeNm = 8;
			const o = observables(s);
			expect(o.velocityNmPerS).toBe(0);
			expect(o.randomness).toBeNull();
			expect(o.randomnessReason).toMatch(/velocity is zero/);
			expect(o.diffusionNm2PerS).toBeGreaterThan(0);
			expect(o.entropyProductionKTPerS!).toBeGreaterThanOrEqual(0);
			const audit = auditScheme(s);
			for (const c of audit.cycles) expect(c.netFlux! * audit.cycleAffinitiesKT[audit.cycles.indexOf(c)]!).toBeGreaterThanOrEqual(0);
		}
	});
});

/** A driven three-state cycle where state B sits near 1e-400 and still carries a flux of about 1e-200 /s. */
const DEEP = { u: [1e-150, 1e200, 1], w: [1e-3, 1e250, 1e-200], d: [3, 3, 2] }; // A → B → C → A; w_j = rate j → j−1

function deepState(order: string): Scheme {
	const ids = ['A', 'B', 'C'];
	const steps = [0, 1, 2].map((j) => plainStep(`${ids[j]}${ids[(j + 1) % 3]}`, ids[j], ids[(j + 1) % 3], DEEP.u[j], DEEP.w[(j + 1) % 3], DEEP.d[j]));
	return { ...plainScheme('deep state', [...order], steps), stepSizeNm: 8 };
}

/**
 * Subtraction-free 60-digit reference: the three directed spanning trees into each state (King & Altman 1956) [pub],
 * the cycle's net flux (Π+ − Π−)/Σ (Hill 1989) [pub], V = 8 nm × that flux.
 */
function deepReference() {
	const u = DEEP.u.map((x) => new X(x));
	const w = DEEP.w.map((x) => new X(x));
	// trees into state i: both others point along the cycle or against it towards i
	const into = (i: number) => {
		const a = (i + 1) % 3;
		const b = (i + 2) % 3;
		return w[a].mul(u[b]).add(w[a].mul(w[b])).add(u[b].mul(u[a]));
	};
	const sums = [0, 1, 2].map(into);
	const sigma = sums.reduce((t, v) => t.add(v), new X(0));
	const flux = u[0].mul(u[1]).mul(u[2]).sub(w[0].mul(w[1]).mul(w[2])).div(sigma);
	return { log10p: sums.map((t) => t.div(sigma).log(10).toNumber()), flux, V: flux.mul(8) };
}

describe('probabilities below the double range — log-scale elimination [der]', () => {
	const ref = deepReference();
	it.each(['ABC', 'ACB', 'BAC', 'BCA', 'CAB', 'CBA'])(
		'regression: p ≈ 1e-400 is no transient state, V ≈ 1e-200 keeps its sign and 1e-8 (states listed %s)',
		(order) => {
			const s = deepState(order);
			const audit = auditScheme(s);
			expect(audit.findings.filter((f) => f.kind === 'transient-state')).toEqual([]);
			for (const st of audit.states) expect(Math.abs(st.probabilityLog10! - ref.log10p['ABC'.indexOf(st.id)])).toBeLessThan(1e-8);
			expect(audit.states.find((st) => st.id === 'B')!.probabilityLog10!).toBeLessThan(-399);
			const V = audit.observables.velocityNmPerS;
			expect(V).toBeGreaterThan(0);
			expect(rel(V, ref.V)).toBeLessThan(1e-8);
			expect(rel(velocityAt(s, 0), ref.V)).toBeLessThan(1e-8);
			for (const st of audit.steps) expect(rel(st.netFlux, ref.flux)).toBeLessThan(1e-8);
			const D = derrida(DEEP.u, DEEP.w, 8).D; // Derrida 1983 [pub]
			expect(rel(audit.observables.diffusionNm2PerS, D)).toBeLessThan(1e-8);
		}
	);
});
