import { describe, expect, it } from 'vitest';
import { auditScheme, PACER_STEPPER, velocityAt, type Scheme } from '../engine';
import { speciesOf, storedStallForce, stallForceOrNull, stallForces, treesInto, velocitySweep } from './audit-curves';

// CODATA 2018 exact constants [pub]
const KB = 1.380649e-23; // J/K
const NA = 6.02214076e23; // 1/mol

/**
 * A tightly coupled one-cycle motor (one ATP and one 8 nm step per turn) stalls where the work against the load
 * equals the free energy of hydrolysis: F·δ = −ΔG = −ΔG°' − kT ln([ADP][Pi]/[ATP]) [der from the second law].
 */
function thermodynamicStallPN(scheme: Scheme): number {
	const kTpNnm = KB * scheme.temperatureK * 1e21;
	const dG0pNnm = (scheme.reactions[0].deltaG0kJPerMol * 1e3 * 1e21) / NA;
	const c = scheme.concentrationsM;
	const dG = dG0pNnm + kTpNnm * Math.log((c.ADP * c.Pi) / c.ATP);
	return -dG / 8;
}

describe('stall force of a stored scheme', () => {
	it('equals the free energy of hydrolysis per step for the tightly coupled Pacer-1 stepper', () => {
		const f = stallForceOrNull(PACER_STEPPER);
		expect(f).not.toBeNull();
		expect(f!).toBeCloseTo(thermodynamicStallPN(PACER_STEPPER), 6);
	});
	it('is null, not the load where the velocity underflows, when a step is irreversible (regression: 32 pN reported)', () => {
		const oneWay: Scheme = { ...PACER_STEPPER, steps: PACER_STEPPER.steps.map((s) => (s.id === 'ADP release' ? { ...s, kBackward: 0 } : s)) };
		expect(velocityAt(oneWay, 0)).toBeGreaterThan(0);
		expect(stallForceOrNull(oneWay)).toBeNull();
		expect(stallForces(oneWay).reason).toBe('irreversible');
	});
	it('takes a stored audit’s own figure, even when it is none, and asks for it to be computed only when the audit has none', () => {
		expect(storedStallForce(auditScheme(PACER_STEPPER).observables)!).toBeCloseTo(thermodynamicStallPN(PACER_STEPPER), 6);
		expect(storedStallForce({ stallForcePN: null, stallForcesPN: [] })).toBeNull();
		// an audit made before the audit carried the stall force, or past the audit's work budget
		expect(storedStallForce({})).toBeUndefined();
		expect(storedStallForce({ stallForcePN: null, stallForcesPN: null })).toBeUndefined();
	});
});

describe('velocity sweeps', () => {
	it('runs the load sweep through the stall force with the sign change at the right place', () => {
		const stall = thermodynamicStallPN(PACER_STEPPER);
		const points = velocitySweep(PACER_STEPPER, 'force', -10, 15, 26);
		expect(points).toHaveLength(26);
		for (const p of points) expect(Math.sign(p.velocityNmPerS!)).toBe(p.x < stall ? 1 : -1);
	});
	it('spaces a concentration sweep in log10 and changes only that species', () => {
		const points = velocitySweep(PACER_STEPPER, 'ATP', 1e-7, 1e-2, 6);
		expect(points.map((p) => Math.round(Math.log10(p.x)))).toEqual([-7, -6, -5, -4, -3, -2]);
		// at the stored [ATP] the sweep gives the audited velocity
		const atStored = points.find((p) => Math.abs(p.x - 1e-3) < 1e-12)!;
		expect(atStored.velocityNmPerS!).toBeCloseTo(auditScheme(PACER_STEPPER).observables.velocityNmPerS, 8);
		// more ATP, more speed, below saturation
		for (let i = 1; i < points.length; i++) expect(points[i].velocityNmPerS!).toBeGreaterThan(points[i - 1].velocityNmPerS!);
	});
	it('knows the species of the scheme', () => {
		expect(speciesOf(PACER_STEPPER)).toEqual(['ADP', 'ATP', 'Pi']);
	});
});

describe('spanning trees of a stored scheme', () => {
	it('gives n trees into each state of a ring of n states, and probabilities by the Markov chain tree theorem', () => {
		const audit = auditScheme(PACER_STEPPER);
		const sets = PACER_STEPPER.states.map((s) => treesInto(PACER_STEPPER, s.id));
		const total = sets.reduce((sum, t) => sum + t.weightSum, 0);
		sets.forEach((set, i) => {
			// a ring of 4 states has 4 spanning trees, each with a unique orientation into the root [pub: Kirchhoff]
			expect(set.count).toBe(4);
			expect(set.trees.every((t) => t.edges.length === 3 && t.edges.every((e) => e.from !== set.root))).toBe(true);
			expect(set.weightSum / total).toBeCloseTo(audit.states[i].probability, 10);
		});
	});
});
