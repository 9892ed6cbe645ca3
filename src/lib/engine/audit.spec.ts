import { describe, expect, it } from 'vitest';
import { auditScheme } from './audit';
import { PACER_STEPPER } from './examples';
import { completeScheme, freeEnergyScheme } from './random-scheme';
import { AUDIT_FORMAT } from './scheme';

const REQUIRED_TOP = ['format', 'states', 'steps', 'cycles', 'cycleCount', 'cyclesComplete', 'observables'];
const EXTRA_TOP = [
	'engineVersion',
	'conditions',
	'verdictCounts',
	'cycleAffinitiesKT',
	'basisVerdicts',
	'consistencyComplete',
	'consistencyScope',
	'findings',
	'cautions',
	'correction'
];
const CYCLE_KEYS = [
	'states',
	'steps',
	'log10RateRatio',
	'expectedLog10',
	'deviationLog10',
	'sigmaLog10',
	'verdict',
	'forwardFlux',
	'backwardFlux',
	'netFlux',
	'netReaction',
	'displacementNm'
];
const OBSERVABLE_KEYS = [
	'velocityNmPerS',
	'diffusionNm2PerS',
	'randomness',
	'entropyProductionKTPerS',
	'reactionRatesPerS',
	'efficiency',
	'efficiencyRegime',
	'efficiencyNote',
	'stallForcePN',
	'stallForcesPN',
	'randomnessReason',
	'accuracy'
];

describe('auditScheme', () => {
	it('has exactly the escapement.audit/1 keys plus the documented extras, and survives JSON', () => {
		const audit = auditScheme(PACER_STEPPER);
		expect(Object.keys(audit).sort()).toEqual([...REQUIRED_TOP, ...EXTRA_TOP].sort());
		expect(audit.format).toBe(AUDIT_FORMAT);
		expect(Object.keys(audit.cycles[0]).sort()).toEqual([...CYCLE_KEYS].sort());
		expect(Object.keys(audit.observables).sort()).toEqual([...OBSERVABLE_KEYS].sort());
		expect(Object.keys(audit.states[0]).sort()).toEqual(['id', 'probability', 'probabilityLog10']);
		expect(Object.keys(audit.steps[0]).sort()).toEqual(['backwardRate', 'forwardRate', 'id', 'netFlux']);
		expect(JSON.parse(JSON.stringify(audit))).toEqual(audit);
		expect(audit.states.reduce((t, s) => t + s.probability, 0)).toBeCloseTo(1, 14);
		expect(audit.cycleCount).toBe(audit.cycles.length);
	});

	it('falls back to the cycle basis when the cap stops enumeration, and says so', () => {
		const audit = auditScheme(completeScheme(7), { maxCycles: 50 });
		expect(audit.cyclesComplete).toBe(false);
		expect(audit.cycleCount).toBe(50);
		expect(audit.basisVerdicts).toHaveLength(21 - 7 + 1); // steps − states + 1 [pub: Kirchhoff]
		expect(audit.findings.find((f) => f.kind === 'cycle-cap')?.message).toMatch(/cap maxCycles = 50 was reached/);
		// unit rates, no driving: every cycle consistent; counted are the 50 listed cycles and the basis cycles not among them
		const listed = new Set(audit.cycles.map((c) => c.steps.map((s) => s.id).sort().join(',')));
		const unlistedBasis = audit.basisVerdicts.filter((b) => !listed.has(b.steps.map((s) => s.id).sort().join(','))).length;
		expect(audit.verdictCounts).toEqual({ consistent: 50 + unlistedBasis, violation: 0, irreversible: 0, unbalanced: 0 });
		// an exactly consistent basis decides every cycle [pub: Kolmogorov 1936; Wegscheider 1901]
		expect(audit.consistencyComplete).toBe(true);
		expect(audit.consistencyScope.deviationBoundLog10).toBeLessThan(1e-12);
	});

	it('judges a large scheme on its basis only with maxCycles 0', () => {
		const audit = auditScheme(freeEnergyScheme({ states: 60, steps: 120, seed: 4 }), { maxCycles: 0 });
		expect(audit.cycles).toEqual([]);
		expect(audit.basisVerdicts).toHaveLength(61);
		expect(audit.basisVerdicts.every((b) => b.verdict === 'consistent')).toBe(true);
		expect(Number.isFinite(audit.observables.diffusionNm2PerS)).toBe(true);
	});

	it('reports a state that zero rates make unreachable as a finding with its path', () => {
		const scheme = {
			...PACER_STEPPER,
			steps: PACER_STEPPER.steps.map((s, i) => (i === 0 ? { ...s, kForward: 0 } : i === 3 ? { ...s, kBackward: 0 } : s))
		};
		const audit = auditScheme(scheme);
		expect(audit.states[1].probability).toBe(0);
		expect(audit.states[1].probabilityLog10).toBeNull();
		expect(audit.findings.filter((f) => f.kind === 'transient-state').map((f) => f.path)).toEqual(['states[1]', 'states[2]', 'states[3]']);
	});

	it('regression, large schemes stalling on cycle fluxes: past maxFluxWork fluxes are null and a caution says so', () => {
		const audit = auditScheme(freeEnergyScheme({ states: 80, steps: 160, seed: 2 }), { maxCycles: 500, maxFluxWork: 5e6 });
		const withFlux = audit.cycles.filter((c) => c.forwardFlux !== null).length;
		expect(withFlux).toBeGreaterThan(0);
		expect(withFlux).toBeLessThan(audit.cycles.length);
		expect(audit.cycles.slice(withFlux).every((c) => c.forwardFlux === null && c.netFlux === null)).toBe(true);
		expect(audit.cautions.some((c) => c.includes(`first ${withFlux} of 500`))).toBe(true);
	});
});
