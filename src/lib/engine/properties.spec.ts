/**
 * Property tests (fast-check) over seeded random schemes: moderate, stiff, nearly decomposable and driven
 * free-energy schemes under load. Each property names its source; counterexamples print their seed.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { auditScheme } from './audit';
import { cycleEntropyProduction, cycleFluxes } from './fluxes';
import { enumerateCycles } from './cycles';
import { chemistryModel } from './chemistry';
import { judgeCycle } from './consistency';
import { observablesOf } from './observables';
import { effectiveRates } from './rates';
import { freeEnergyScheme, mulberry32, randomScheme, type RandomSchemeOptions } from './random-scheme';
import type { Scheme } from './scheme';
import { steadyState, stepFlows } from './steady-state';

const RUNS = { numRuns: 20, seed: 20261203 };

const families: Record<string, (seed: number) => Scheme> = {
	moderate: (seed) => randomScheme(shape(seed, { log10Rates: [-1, 3] })),
	stiff: (seed) => randomScheme(shape(seed, { log10Rates: [-8, 8] })),
	'nearly decomposable': (seed) => randomScheme(shape(seed, { log10Rates: [2, 4], clusters: 3, log10SlowRates: [-9, -7] })),
	'rapid equilibria': (seed) => {
		const s = randomScheme(shape(seed, { log10Rates: [-1, 3] }));
		const rand = mulberry32(seed ^ 0xfa57);
		s.steps = s.steps.map((st, i) => (i % 3 ? st : { ...st, kForward: 10 ** (13 + 3 * rand()), kBackward: 10 ** (13 + 3 * rand()) }));
		return s;
	},
	'driven, under load': (seed) => ({ ...freeEnergyScheme(shape(seed, {})), forcePN: 4 * mulberry32(seed)() - 1 })
};

function shape(seed: number, o: Partial<RandomSchemeOptions>): Partial<RandomSchemeOptions> {
	const states = 5 + (seed % 4);
	return { states, steps: states + 3 + (seed % 3), seed, displacements: true, ...o };
}

const familyAndSeed = fc.record({ family: fc.constantFrom(...Object.keys(families)), seed: fc.integer({ min: 1, max: 1e6 }) });

function analyse(scheme: Scheme) {
	const table = effectiveRates(scheme);
	const ss = steadyState(table);
	const flows = stepFlows(table, ss);
	const obs = observablesOf(scheme, table, ss, chemistryModel(scheme, table.kT), flows);
	return { table, ss, flows, obs };
}

/** |a − b| within `tol` of the larger magnitude (or of `floor` when both are that small). */
const close = (a: number, b: number, tol: number, floor = 0) => Math.abs(a - b) <= tol * Math.max(Math.abs(a), Math.abs(b), floor);

/** The same scheme with states relabelled and listed in another order, and the steps listed in another order. */
function relabel(scheme: Scheme, seed: number): { scheme: Scheme; stepOrder: number[]; name: Map<string, string> } {
	const rand = mulberry32(seed);
	const shuffle = <T>(xs: T[]) => {
		const a = [...xs];
		for (let i = a.length - 1; i > 0; i--) {
			const j = Math.floor(rand() * (i + 1));
			[a[i], a[j]] = [a[j], a[i]];
		}
		return a;
	};
	const labels = shuffle(scheme.states.map((_, i) => `R${i}`));
	const name = new Map(scheme.states.map((s, i) => [s.id, labels[i]]));
	const stepOrder = shuffle(scheme.steps.map((_, i) => i));
	return {
		scheme: {
			...scheme,
			states: shuffle(scheme.states).map((s) => ({ id: name.get(s.id)! })),
			steps: stepOrder.map((i) => {
				const st = scheme.steps[i];
				return { ...st, from: name.get(st.from)!, to: name.get(st.to)! };
			})
		},
		stepOrder,
		name
	};
}

/** Every step written the other way round: from/to, rates, binds/releases, displacement sign, θ → 1 − θ [der]. */
function reverseSteps(scheme: Scheme, which: (i: number) => boolean): Scheme {
	return {
		...scheme,
		steps: scheme.steps.map((st, i) =>
			which(i)
				? {
						...st,
						from: st.to,
						to: st.from,
						kForward: st.kBackward,
						kBackward: st.kForward,
						binds: st.releases,
						releases: st.binds,
						displacementNm: -st.displacementNm,
						loadFraction: 1 - st.loadFraction,
						relUncertaintyForward: st.relUncertaintyBackward,
						relUncertaintyBackward: st.relUncertaintyForward
					}
				: st
		)
	};
}

describe('invariance — a scheme does not change by how it is written down [der]', () => {
	it('relabelling and reordering states and steps leaves p, V, D, σ and every net flux unchanged', () => {
		fc.assert(
			fc.property(familyAndSeed, ({ family, seed }) => {
				const scheme = families[family](seed);
				const a = analyse(scheme);
				const { scheme: moved, stepOrder, name } = relabel(scheme, seed);
				const b = analyse(moved);
				sameMotion(a, b);
				stepOrder.forEach((orig, k) => {
					const oneWay = a.flows.forward[orig] + a.flows.backward[orig];
					expect(close(a.flows.net[orig], b.flows.net[k], 1e-10, 1e-28 * oneWay)).toBe(true);
				});
				scheme.states.forEach((st, i) => {
					const j = moved.states.findIndex((x) => x.id === name.get(st.id));
					expect(Math.abs(a.ss.logP[i] - b.ss.logP[j])).toBeLessThan(1e-12 * (1 + Math.abs(a.ss.logP[i])));
				});
			}),
			RUNS
		);
	});

	it('writing steps the other way round negates their net fluxes and leaves V, D, σ unchanged', () => {
		fc.assert(
			fc.property(familyAndSeed, fc.integer({ min: 1, max: 1e6 }), ({ family, seed }, pick) => {
				const scheme = families[family](seed);
				const rand = mulberry32(pick);
				const flip = scheme.steps.map(() => rand() < 0.5);
				const a = analyse(scheme);
				const b = analyse(reverseSteps(scheme, (i) => flip[i]));
				sameMotion(a, b);
				flip.forEach((f, s) => {
					const oneWay = a.flows.forward[s] + a.flows.backward[s];
					expect(close(a.flows.net[s], f ? -b.flows.net[s] : b.flows.net[s], 1e-10, 1e-28 * oneWay)).toBe(true);
				});
			}),
			RUNS
		);
	});
});

function sameMotion(a: ReturnType<typeof analyse>, b: ReturnType<typeof analyse>) {
	// V is exactly 0 (zero within its error) in both writings, or the same to 1e-10
	if (a.obs.velocityNmPerS === 0 || b.obs.velocityNmPerS === 0) expect(b.obs.velocityNmPerS).toBe(a.obs.velocityNmPerS);
	else expect(close(a.obs.velocityNmPerS, b.obs.velocityNmPerS, 1e-10)).toBe(true);
	expect(close(a.obs.diffusionNm2PerS, b.obs.diffusionNm2PerS, 1e-10)).toBe(true);
	expect(close(a.obs.entropyProductionKTPerS ?? Infinity, b.obs.entropyProductionKTPerS ?? Infinity, 1e-9)).toBe(true);
}

describe('bounds and identities on random schemes', () => {
	it('D ≥ 0 and σ ≥ 0 in both forms [pub] Schnakenberg 1976; randomness of a moving motor is positive', () => {
		fc.assert(
			fc.property(familyAndSeed, ({ family, seed }) => {
				const scheme = { ...families[family](seed), stepSizeNm: 8 };
				const audit = auditScheme(scheme);
				expect(audit.observables.diffusionNm2PerS).toBeGreaterThanOrEqual(0);
				expect(audit.observables.entropyProductionKTPerS!).toBeGreaterThanOrEqual(0);
				audit.cycles.forEach((c, i) => expect(c.netFlux! * audit.cycleAffinitiesKT[i]!).toBeGreaterThanOrEqual(0));
				if (audit.observables.velocityNmPerS !== 0) expect(audit.observables.randomness!).toBeGreaterThan(0);
				else expect(audit.observables.randomnessReason).toMatch(/velocity is zero/);
			}),
			RUNS
		);
	});

	it("flux balance: each step's net flux is the signed sum of its cycles' net fluxes — Hill 1989 [pub]", () => {
		fc.assert(
			fc.property(familyAndSeed, ({ family, seed }) => {
				const scheme = families[family](seed);
				const { table, ss, flows } = analyse(scheme);
				const { cycles, complete } = enumerateCycles(table);
				expect(complete).toBe(true);
				const chem = chemistryModel(scheme, table.kT);
				const js = cycles.map((c) => judgeCycle(c, table, chem, scheme));
				const fl = cycleFluxes(ss.K, table.n, ss.logSigma, cycles, js.map((j) => j.lnForward), js.map((j) => j.lnBackward));
				const sum = new Float64Array(table.m);
				const mag = new Float64Array(table.m);
				cycles.forEach((c, k) => {
					for (const st of c.steps) {
						sum[st.step] += st.direction * fl.net[k];
						mag[st.step] += Math.abs(fl.net[k]) + 1e-15 * fl.backward[k];
					}
				});
				for (let s = 0; s < table.m; s++) expect(Math.abs(flows.net[s] - sum[s])).toBeLessThanOrEqual(1e-9 * mag[s] + 1e-300);
			}),
			RUNS
		);
	});

	it('the step form and the cycle form of the entropy production agree — Schnakenberg 1976 [pub]', () => {
		fc.assert(
			fc.property(familyAndSeed, ({ family, seed }) => {
				const scheme = families[family](seed);
				const { table, ss, obs } = analyse(scheme);
				const { cycles } = enumerateCycles(table);
				const chem = chemistryModel(scheme, table.kT);
				const js = cycles.map((c) => judgeCycle(c, table, chem, scheme));
				const lnF = js.map((j) => j.lnForward);
				const lnB = js.map((j) => j.lnBackward);
				const cycleForm = cycleEntropyProduction(cycleFluxes(ss.K, table.n, ss.logSigma, cycles, lnF, lnB), lnF, lnB);
				expect(cycleForm).toBeGreaterThanOrEqual(0);
				expect(close(obs.entropyProductionKTPerS!, cycleForm, 1e-8, 1e-300)).toBe(true);
			}),
			RUNS
		);
	});

	it('thermodynamic uncertainty relation 2Dσ/V² ≥ 2 (σ in kB/s) — Barato & Seifert 2015, PRL 114:158101 [pub]', () => {
		fc.assert(
			fc.property(familyAndSeed, ({ family, seed }) => {
				const { obs } = analyse(families[family](seed));
				const V = obs.velocityNmPerS;
				fc.pre(V !== 0);
				expect((2 * obs.diffusionNm2PerS * obs.entropyProductionKTPerS!) / (V * V)).toBeGreaterThanOrEqual(2 * (1 - 1e-9));
			}),
			RUNS
		);
	});
});
