import { describe, expect, it } from 'vitest';
import { auditScheme } from './audit';
import { randomScheme } from './random-scheme';

// Arbitrary (driven, not detailed-balanced) random schemes: the identities hold for any rates.
const seeds = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];

describe("Hill's cycle fluxes", () => {
	it.each(seeds)("each step's net flux is the signed sum of the net fluxes of its cycles — Hill 1989 [pub] (seed %i)", (seed) => {
		const scheme = randomScheme({ states: 5 + (seed % 4), steps: 9 + (seed % 5), seed, log10Rates: [-2, 4] });
		const audit = auditScheme(scheme);
		expect(audit.cyclesComplete).toBe(true);
		const sum = new Map<string, number>();
		for (const c of audit.cycles)
			for (const s of c.steps) sum.set(s.id, (sum.get(s.id) ?? 0) + s.direction * c.netFlux!);
		const scale = Math.max(...audit.cycles.map((c) => c.forwardFlux!));
		for (const step of audit.steps) expect(Math.abs(step.netFlux - (sum.get(step.id) ?? 0))).toBeLessThan(1e-10 * scale);
	});

	it.each(seeds)('ln(J+/J−) = ln(Π+/Π−) on every cycle — Hill 1989 [pub] (seed %i)', (seed) => {
		const audit = auditScheme(randomScheme({ states: 6, steps: 10, seed }));
		for (const c of audit.cycles) expect(Math.log10(c.forwardFlux! / c.backwardFlux!)).toBeCloseTo(c.log10RateRatio!, 10);
	});

	it.each(seeds)("Schnakenberg's step form and cycle form of the entropy production agree — Schnakenberg 1976 [pub] (seed %i)", (seed) => {
		const audit = auditScheme(randomScheme({ states: 6, steps: 11, seed, log10Rates: [-3, 5] }));
		const cycleForm = audit.cycles.reduce((t, c, i) => t + c.netFlux! * audit.cycleAffinitiesKT[i]!, 0);
		const stepForm = audit.observables.entropyProductionKTPerS!;
		expect(stepForm).toBeGreaterThan(0);
		expect(Math.abs(cycleForm / stepForm - 1)).toBeLessThan(1e-9);
	});
});
