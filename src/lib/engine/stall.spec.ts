import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { auditScheme } from './audit';
import { enumerateCycles } from './cycles';
import { PACER_STEPPER } from './examples';
import { observables, velocityAt } from './observables';
import { preciseAnalysis } from './precise';
import { freeEnergyScheme, mulberry32, plainScheme, plainStep } from './random-scheme';
import { effectiveRates } from './rates';
import { EngineError, type Scheme, type SchemeStep } from './scheme';
import { stallForce, stallSearch } from './stall';
import { kJPerMolToPNnm, molarThermalEnergyKJPerMol, thermalEnergyPNnm } from './units';

const tight = JSON.parse(readFileSync(new URL('../../../reference/tight-coupling.json', import.meta.url), 'utf8'));
const twoState = JSON.parse(readFileSync(new URL('../../../reference/two-state-periodic.json', import.meta.url), 'utf8'));

const scheme = (states: string[], steps: SchemeStep[], extra: Partial<Scheme> = {}): Scheme => ({ ...plainScheme('check', states, steps), ...extra });
const cyclesOf = (s: Scheme) => enumerateCycles(effectiveRates(s)).cycles;
/** Both ways the engine searches: with every simple cycle (the audit) and with the plain scan (large schemes). */
const bothModes = (s: Scheme) => [stallSearch(s, { cycles: cyclesOf(s) }), stallSearch(s)];
const kT = thermalEnergyPNnm(298.15);
const HYDROLYSIS = { id: 'ATP hydrolysis', stoichiometry: { ATP: -1, ADP: 1, Pi: 1 }, deltaG0kJPerMol: -30.5 };

/** V at a load from the 80-digit tree sums: an independent algorithm (determinants) at a precision that dwarfs rounding. */
function preciseVelocity(s: Scheme, forcePN: number): number {
	const r = preciseAnalysis({ ...s, forcePN });
	const index = new Map(s.states.map((x, i) => [x.id, i]));
	let v = new r.D(0);
	s.steps.forEach((st, k) => {
		const up = r.probabilities[index.get(st.from)!].mul(r.kPlus[k]);
		const down = r.probabilities[index.get(st.to)!].mul(r.kMinus[k]);
		v = v.add(up.sub(down).mul(st.displacementNm));
	});
	return v.toNumber();
}

/** A tightly coupled single cycle: n × (ATP binding, power stroke, ADP release, Pi release), d nm in total. */
function tightCycle(n: number, d: number, dG0: number, c: Record<string, number>, seed: number): Scheme {
	const rand = mulberry32(seed);
	const states: string[] = [];
	const steps: SchemeStep[] = [];
	const k = 4 * n;
	for (let i = 0; i < k; i++) states.push(`M${i}`);
	for (let i = 0; i < k; i++) {
		const st = plainStep(`t${i}`, states[i], states[(i + 1) % k], 10 ** (1 + 3 * rand()), 10 ** (3 * rand()), i % 4 === 1 ? d / n : 0);
		if (i % 4 === 0) st.binds = ['ATP'];
		if (i % 4 === 2) st.releases = ['ADP'];
		if (i % 4 === 3) st.releases = ['Pi'];
		st.loadFraction = Math.round(rand() * 100) / 100;
		steps.push(st);
	}
	// close the cycle thermodynamically: Σ ln kF − Σ ln kB = −n ΔG°'/RT [der from Hill 1989]
	let lnRatio = 0;
	for (const st of steps.slice(0, -1)) lnRatio += Math.log(st.kForward / st.kBackward);
	steps[k - 1].kBackward = Math.exp(lnRatio + Math.log(steps[k - 1].kForward) + (n * dG0) / molarThermalEnergyKJPerMol(298.15));
	return scheme(states, steps, { concentrationsM: c, reactions: [{ ...HYDROLYSIS, deltaG0kJPerMol: dG0 }], stepSizeNm: d });
}

describe('stall force of tightly coupled motors: F = n·Δμ/d — tight coupling [der]; 1 ATP per 8 nm, Schnitzer & Block 1997 [pub]', () => {
	type Case = { atpPerCycle: number; stepNm: number; deltaG0kJPerMol: number; concentrationsM: Record<string, number> };
	it.each(tight.cases as Case[])('n=$atpPerCycle, d=$stepNm nm', ({ atpPerCycle: n, stepNm: d, deltaG0kJPerMol: dG0, concentrationsM: c }) => {
		const s = tightCycle(n, d, dG0, c, 7 * n + d);
		const deltaMu = -(kJPerMolToPNnm(dG0) + kT * Math.log((c.ADP * c.Pi) / c.ATP));
		const expected = (n * deltaMu) / d;
		for (const found of bothModes(s)) {
			expect(found.stallForcesPN).toHaveLength(1);
			expect(Math.abs(found.stallForcePN! / expected - 1)).toBeLessThan(tight.relativeTolerance);
			expect(found.message).toBeNull();
		}
		// the audit carries it, and the cycle bracket needs no evaluation of V at all [der]
		const audit = auditScheme(s);
		expect(Math.abs(audit.observables.stallForcePN! / expected - 1)).toBeLessThan(tight.relativeTolerance);
		expect(audit.observables.stallForcesPN).toEqual([audit.observables.stallForcePN]);
		expect(stallSearch(s, { cycles: cyclesOf(s) }).evaluations).toBe(0);
	});

	it('the invented Pacer-1 stepper stalls where V changes sign, at F·8 nm = −ΔG of hydrolysis [der]', () => {
		const c = PACER_STEPPER.concentrationsM;
		const expected = -(kJPerMolToPNnm(-30.5) + kT * Math.log((c.ADP * c.Pi) / c.ATP)) / 8;
		const F = stallForce(PACER_STEPPER);
		expect(F).toBeCloseTo(expected, 6);
		expect(velocityAt(PACER_STEPPER, F - 0.5)).toBeGreaterThan(0);
		expect(velocityAt(PACER_STEPPER, F + 0.5)).toBeLessThan(0);
	});
});

describe('two-state periodic model: V(F) changes sign at (kBT/d)·ln(u0u1/(w0w1)) — Derrida 1983; Fisher & Kolomeisky 1999 [pub]', () => {
	const stiff = [
		{ u0: 1e16, u1: 40, w0: 2, w1: 1e15, periodNm: 8, firstSubstepFraction: 0.5 },
		{ u0: 3e-3, u1: 1e9, w0: 1e8, w1: 2e-6, periodNm: 5, firstSubstepFraction: 0.9 }
	];
	type Case = (typeof stiff)[number];
	it.each([...(twoState.cases as Case[]), ...stiff])('u0=$u0 u1=$u1 w0=$w0 w1=$w1 d=$periodNm', ({ u0, u1, w0, w1, periodNm: d, firstSubstepFraction: f }) => {
		const rand = mulberry32(Math.round(u0 + 7 * w1));
		const a = { ...plainStep('a', '0', '1', u0, w1, d * f), loadFraction: Math.round(100 * rand()) / 100 };
		const b = { ...plainStep('b', '1', '0', u1, w0, d * (1 - f)), loadFraction: Math.round(100 * rand()) / 100 };
		const s = scheme(['0', '1'], [a, b]);
		const expected = (kT / d) * Math.log((u0 * u1) / (w0 * w1));
		for (const found of bothModes(s)) {
			expect(found.stallForcesPN).toHaveLength(1);
			// within the uncertainty the search reports (rounding of V over its slope), and that is small
			expect(Math.abs(found.stallForcePN! - expected)).toBeLessThanOrEqual(found.uncertaintiesPN![0] + 1e-9 * Math.max(1, Math.abs(expected)));
			// V is summed with its error relative to itself, so even a 1e16 /s substep leaves the stall sharp
			expect(found.uncertaintiesPN![0]).toBeLessThan(1e-6);
		}
		// the closed form's sign on both sides [pub]: V ∝ u0(F)u1(F) − w0(F)w1(F) = u0u1·e^(−Fd/kT) − w0w1
		for (const F of [expected - 1, expected + 1]) expect(Math.sign(velocityAt(s, F))).toBe(Math.sign(u0 * u1 * Math.exp((-F * d) / kT) - w0 * w1));
	});
});

describe('the audit says how well it knows the stall force', () => {
	it('cautions where V loses digits near the stall (a 1e16 /s substep, scanned) and not for the Pacer-1 stepper', () => {
		const s = scheme(['0', '1'], [{ ...plainStep('a', '0', '1', 1e16, 1e15, 4), loadFraction: 0.36 }, { ...plainStep('b', '1', '0', 40, 2, 4), loadFraction: 0.97 }]);
		const scanned = stallSearch(s);
		// the true stall lies within what the search says it knows [pub: Fisher & Kolomeisky 1999]
		expect(Math.abs(scanned.stallForcePN! - (kT / 8) * Math.log(200))).toBeLessThanOrEqual(scanned.uncertaintiesPN![0]);
		const caution = (c: string) => /stall force is known only/.test(c);
		expect(auditScheme(s, { maxCycles: 0 }).cautions.some(caution)).toBe(scanned.uncertaintiesPN![0] > 1e-6 * Math.max(1, scanned.stallForcePN!));
		expect(auditScheme(s).cautions.some(caution)).toBe(false); // the cycle bracket is exact here
		expect(auditScheme(PACER_STEPPER).cautions.some(caution)).toBe(false);
	});
});

/**
 * A loosely coupled motor: ATP binding (E → T), then the step either forward (+8 nm) or backward (−8 nm), both
 * releasing ADP and Pi. Its cycles: forward chemomechanical, backward chemomechanical, and a mechanical slip.
 */
function looseMotor(backwardShare: number, theta: number): Scheme {
	const c = { ATP: 1e-3, ADP: 1e-5, Pi: 1e-3 };
	const deltaMuKT = -(kJPerMolToPNnm(-30.5) / kT + Math.log((c.ADP * c.Pi) / c.ATP));
	// binding 2e6·[ATP] /s against 20 /s; each release closes its cycle at Δμ [der from Hill 1989]
	const bind = { ...plainStep('ATP binding', 'E', 'T', 2e6, 20), binds: ['ATP'] };
	const close = (kForward: number) => (2e6 * c.ATP * kForward) / (20 * Math.exp(deltaMuKT) * c.ADP * c.Pi);
	const fwd = { ...plainStep('forward step', 'T', 'E', 300, close(300), 8), releases: ['ADP', 'Pi'], loadFraction: theta };
	const kb = 300 * backwardShare;
	const bwd = { ...plainStep('backward step', 'T', 'E', kb, close(kb), -8), releases: ['ADP', 'Pi'], loadFraction: theta };
	return scheme(['E', 'T'], [bind, fwd, bwd], { concentrationsM: c, reactions: [HYDROLYSIS], stepSizeNm: 8 });
}

/** Stall of looseMotor from its two-state closed form, by bisection: V = 8·(J_fwd − J_bwd) with p_T/p_E from the balance [der]. */
function looseStallClosedForm(s: Scheme): number {
	const V = (F: number) => {
		const r = effectiveRates({ ...s, forcePN: F });
		const [a, f, b] = [0, 1, 2];
		const ratio = (r.kPlus[a] + r.kMinus[f] + r.kMinus[b]) / (r.kMinus[a] + r.kPlus[f] + r.kPlus[b]); // p_T / p_E
		return 8 * (ratio * r.kPlus[f] - r.kMinus[f]) - 8 * (ratio * r.kPlus[b] - r.kMinus[b]);
	};
	let [lo, hi] = [0, 100];
	for (let i = 0; i < 200; i++) {
		const mid = 0.5 * (lo + hi);
		if (V(mid) > 0) lo = mid;
		else hi = mid;
	}
	return 0.5 * (lo + hi);
}

describe('loosely coupled motor — Liepelt & Lipowsky 2007, PRL 98:258102 [pub]', () => {
	it.each([
		[0.05, 0.5],
		[0.2, 0.3],
		[0.01, 0.9]
	])('stalls below Δμ/d while ATP turnover continues at stall (backward share %f, θ %f)', (share, theta) => {
		const s = looseMotor(share, theta);
		const c = s.concentrationsM;
		const tightStall = -(kJPerMolToPNnm(-30.5) + kT * Math.log((c.ADP * c.Pi) / c.ATP)) / 8;
		const closed = looseStallClosedForm(s);
		for (const found of bothModes(s)) {
			expect(found.stallForcesPN).toHaveLength(1);
			expect(found.stallForcePN!).toBeCloseTo(closed, 7); // two-state closed form [der]
			expect(found.stallForcePN!).toBeLessThan(tightStall);
		}
		const atStall = observables({ ...s, forcePN: closed });
		expect(Math.abs(atStall.velocityNmPerS)).toBeLessThan(1e-6);
		expect(atStall.reactionRatesPerS['ATP hydrolysis']).toBeGreaterThan(1); // turnover continues, per second
	});
});

describe('several stall forces (regression: a consistent network with three got one and no warning)', () => {
	// free-energy schemes are consistent at every load by construction; these seeds have three sign changes
	it.each([168, 398, 583, 990])('3 states, 5 steps, seed %i: every sign change, checked against the 80-digit V', (seed) => {
		const s = freeEnergyScheme({ states: 3, steps: 5, seed });
		const [withCycles, scanned] = bothModes(s);
		expect(withCycles.stallForcesPN).toHaveLength(3);
		expect(scanned.stallForcesPN!.length).toBe(3);
		for (const [i, F] of withCycles.stallForcesPN!.entries()) {
			expect(scanned.stallForcesPN![i]).toBeCloseTo(F, 6);
			// a true sign change of the independent 80-digit V on either side [der]
			const h = 1e-5 * Math.max(1, Math.abs(F));
			expect(Math.sign(preciseVelocity(s, F - h))).toBe(-Math.sign(preciseVelocity(s, F + h)));
		}
		const nearest = [...withCycles.stallForcesPN!].sort((a, b) => Math.abs(a) - Math.abs(b))[0];
		expect(withCycles.stallForcePN).toBe(nearest);
		const audit = auditScheme(s);
		const notes = audit.findings.filter((f) => f.kind === 'stall-force');
		expect(notes).toHaveLength(1);
		expect(notes[0].message).toMatch(/changes sign 3 times/);
		expect(audit.observables.stallForcesPN).toEqual(withCycles.stallForcesPN);
	});
});

describe('no stall force, and the true reason', () => {
	const driven = { concentrationsM: { ATP: 1e-3, ADP: 1e-5, Pi: 1e-3 }, reactions: [HYDROLYSIS] };
	it.each<[string, Scheme]>([
		['no step moves', scheme(['A', 'B'], [plainStep('a', 'A', 'B', 5, 1), plainStep('b', 'B', 'A', 7, 2)])],
		[
			'the displacement sits on a dead-end branch',
			scheme(['A', 'B', 'C'], [{ ...plainStep('a', 'A', 'B', 5e3, 1), binds: ['ATP'] }, { ...plainStep('b', 'B', 'A', 7, 2), releases: ['ADP', 'Pi'] }, plainStep('c', 'B', 'C', 3, 4, 8)], driven)
		],
		[
			'a driven ring whose displacements cancel (+0.1 +0.2 −0.3 nm, not exactly 0 in binary)',
			scheme(
				['A', 'B', 'C'],
				[{ ...plainStep('a', 'A', 'B', 5e3, 1, 0.1), binds: ['ATP'] }, plainStep('b', 'B', 'C', 40, 2, 0.2), { ...plainStep('c', 'C', 'A', 30, 1e-3, -0.3), releases: ['ADP', 'Pi'] }],
				driven
			)
		],
		[
			'the only moving cycle runs through transient states (nothing flows back into C and D)',
			scheme(
				['A', 'B', 'C', 'D'],
				[
					{ ...plainStep('a', 'A', 'B', 5e3, 1), binds: ['ATP'] },
					{ ...plainStep('b', 'B', 'A', 7, 2), releases: ['ADP', 'Pi'] },
					plainStep('c', 'A', 'C', 0, 5),
					plainStep('d', 'C', 'D', 30, 2, 4),
					plainStep('e', 'D', 'C', 30, 2, 4)
				],
				driven
			)
		]
	])('regression: a stall force was returned where V is zero at every load — %s', (_, s) => {
		for (const found of bothModes(s)) {
			expect(found.stallForcePN).toBeNull();
			expect(found.stallForcesPN).toEqual([]);
			expect(found.reason).toBe('no-motion');
			expect(found.message).toMatch(/zero at every/);
		}
		const audit = auditScheme(s);
		expect(audit.observables.stallForcePN).toBeNull();
		expect(audit.findings.find((f) => f.kind === 'stall-force')!.message).toMatch(/no stall force: V is zero at every/);
		expect(() => stallForce(s)).toThrow(EngineError);
	});

	const ring = (kBackward: (i: number) => number, d: number[]) =>
		scheme(
			['A', 'B', 'C'],
			d.map((x, i) => plainStep(`s${i}`, 'ABC'[i], 'ABC'[(i + 1) % 3], 10 * (i + 1), kBackward(i), x))
		);
	it.each<[string, Scheme]>([
		['every reverse rate zero', ring(() => 0, [4, 2, 2])],
		['every reverse rate zero, displacements of both signs', ring(() => 0, [10, -3, 1])],
		['one reverse rate zero', ring((i) => (i === 1 ? 0 : 5), [8, 0, 0])],
		['a zero rate on ADP release of the Pacer-1 stepper', { ...PACER_STEPPER, steps: PACER_STEPPER.steps.map((s, i) => (i === 3 ? { ...s, kBackward: 0 } : s)) }]
	])('regression: the search crashed or took an underflow for a stall — %s', (_, s) => {
		expect(velocityAt(s, 0)).toBeGreaterThan(0);
		for (const found of bothModes(s)) {
			expect(found.stallForcePN).toBeNull();
			expect(found.reason).toBe('irreversible');
			expect(found.message).toMatch(/zero rate/);
		}
		expect(() => stallForce(s)).toThrow(/no stall force/);
		expect(auditScheme(s).observables.stallForcesPN).toEqual([]);
	});

	it('says when the stall lies beyond the searched range (a tight motor with Δμ/d ≈ 1430 pN) [der]', () => {
		const s = tightCycle(1, 4, -30.5, { ATP: 1, ADP: 1e-300, Pi: 1e-300 }, 3);
		const deltaMu = -(kJPerMolToPNnm(-30.5) + 2 * kT * Math.log(1e-300));
		for (const found of bothModes(s)) {
			expect(found.stallForcePN).toBeNull();
			expect(found.reason).toBe('out-of-range');
		}
		expect(deltaMu / 4).toBeGreaterThan(1000);
		expect(stallSearch(s, { cycles: cyclesOf(s) }).message).toContain(String(Number((deltaMu / 4).toPrecision(4))));
		expect(stallSearch(s, { cycles: cyclesOf(s), maxForcePN: 2000 }).stallForcePN! / (deltaMu / 4)).toBeCloseTo(1, 10);
	});
});

/** Detailed balance by state energies (k+/k− = e^(G_from − G_to) in kBT), random displacements and load fractions. */
function passiveNetwork(seed: number, states: number, extra: number): Scheme {
	const rand = mulberry32(seed);
	const G = Array.from({ length: states }, () => 4 * rand() - 2);
	const ids = G.map((_, i) => `P${i}`);
	const pairs: [number, number][] = [];
	for (let i = 1; i < states; i++) pairs.push([Math.floor(rand() * i), i]);
	for (let k = 0; k < extra; k++) {
		const a = Math.floor(rand() * states);
		pairs.push([a, (a + 1 + Math.floor(rand() * (states - 1))) % states]);
	}
	const steps = pairs.map(([a, b], k) => {
		const kF = 10 ** (1 + 3 * rand());
		return { ...plainStep(`p${k}`, ids[a], ids[b], kF, kF * Math.exp(G[b] - G[a]), Math.round(rand() * 120 - 40) / 10), loadFraction: Math.round(100 * rand()) / 100 };
	});
	return scheme(ids, steps);
}

describe('passive loaded loops stall at 0 pN: at detailed balance every cycle affinity is −F·x/kBT [der]', () => {
	it.each([
		[1, 3, 1, 0],
		[2, 4, 3, 0],
		[3, 5, 4, 6.5],
		[4, 2, 2, -3]
	])('regression: refused "because of a zero rate" it does not have — seed %i, %i states, %i extra steps, audited at %f pN', (seed, n, extra, F0) => {
		const s = { ...passiveNetwork(seed, n, extra), forcePN: F0 };
		for (const found of bothModes(s)) {
			expect(found.stallForcesPN).toHaveLength(1);
			expect(Math.abs(found.stallForcePN!)).toBeLessThan(1e-8);
			expect(found.reason).toBeNull();
		}
		expect(Math.abs(auditScheme(s).observables.stallForcePN!)).toBeLessThan(1e-8);
	});
});

/** Relabel states, reorder steps and write chosen steps backwards (from↔to, rates, binds↔releases, d → −d, θ → 1 − θ). */
function relabel(s: Scheme, statePerm: number[], stepPerm: number[], flips: boolean[]): Scheme {
	const name = new Map(s.states.map((st, i) => [st.id, `Q${statePerm[i]}`]));
	const states = s.states.map((_, i) => ({ id: `Q${i}` }));
	const steps = stepPerm.map((k) => {
		const st = s.steps[k];
		const from = name.get(st.from)!;
		const to = name.get(st.to)!;
		if (!flips[k]) return { ...st, from, to };
		return { ...st, from: to, to: from, kForward: st.kBackward, kBackward: st.kForward, binds: st.releases, releases: st.binds, displacementNm: -st.displacementNm, loadFraction: 1 - st.loadFraction };
	});
	return { ...s, states, steps };
}

describe('stall forces do not depend on labels, step order or the direction a step is written in [der]', () => {
	it('holds over seeded free-energy schemes (fast-check), with and without the cycle bracket', () => {
		const arb = fc
			.record({ seed: fc.integer({ min: 1, max: 3000 }), n: fc.integer({ min: 2, max: 5 }), extra: fc.integer({ min: 1, max: 3 }) })
			.chain(({ seed, n, extra }) =>
				fc.record({
					seed: fc.constant(seed),
					n: fc.constant(n),
					extra: fc.constant(extra),
					statePerm: fc.shuffledSubarray([...Array(n).keys()], { minLength: n, maxLength: n }),
					stepPerm: fc.shuffledSubarray([...Array(n - 1 + extra).keys()], { minLength: n - 1 + extra, maxLength: n - 1 + extra }),
					flips: fc.array(fc.boolean(), { minLength: n - 1 + extra, maxLength: n - 1 + extra })
				})
			);
		fc.assert(
			fc.property(arb, ({ seed, n, extra, statePerm, stepPerm, flips }) => {
				const s = freeEnergyScheme({ states: n, steps: n - 1 + extra, seed });
				const t = relabel(s, statePerm, stepPerm, flips);
				const [a, b] = [bothModes(s), bothModes(t)];
				for (let mode = 0; mode < 2; mode++) {
					expect(b[mode].reason).toBe(a[mode].reason);
					expect(b[mode].stallForcesPN!.length).toBe(a[mode].stallForcesPN!.length);
					// equal within the uncertainties each search reports (rounding of V over its slope)
					a[mode].stallForcesPN!.forEach((F, i) =>
						expect(Math.abs(b[mode].stallForcesPN![i] - F)).toBeLessThanOrEqual(a[mode].uncertaintiesPN![i] + b[mode].uncertaintiesPN![i] + 1e-9 * Math.max(1, Math.abs(F)))
					);
				}
			}),
			{ numRuns: 40, seed: 20261203 }
		);
	});
});
