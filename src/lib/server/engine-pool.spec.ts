import { afterAll, describe, expect, it } from 'vitest';
import { auditScheme, EngineError, ENGINE_VERSION, PACER_STEPPER, withConditions } from '../engine';
import { completeScheme, freeEnergyScheme, plainScheme, plainStep } from '../engine/random-scheme';
import { auditHash } from './canonical';
import { auditWork, closeEnginePool, runEngine, sweepWork } from './engine-pool';
import { velocitySweep } from './audit-curves';

afterAll(() => closeEnginePool());

describe('engine pool', () => {
	it('audits in a worker thread exactly as in this thread: same results, same content hash', async () => {
		const scheme = freeEnergyScheme({ states: 7, steps: 11, seed: 5 });
		const conditions = { forcePN: 2 };
		const stages: string[] = [];
		const outcome = await runEngine('audit', { scheme, conditions }, { onProgress: (p) => stages.push(p.stage) });
		const inputs = withConditions(scheme, conditions);
		const here = auditScheme(inputs);
		// [der] the engine is deterministic: the thread's JSON is this thread's audit, and RFC 8785 + SHA-256 agree
		expect(JSON.parse(outcome.resultsJson)).toEqual(JSON.parse(JSON.stringify(here)));
		expect(outcome.sha256).toBe(auditHash({ inputs, results: here, engineVersion: ENGINE_VERSION }));
		expect(outcome.verdictCounts).toEqual(here.verdictCounts);
		expect(stages).toContain('content hash');
	});

	it('hands an engine refusal back as an EngineError with the module’s message', async () => {
		// [der] two states joined by a step with both rates zero: no unique steady state
		const cut = plainScheme('cut', ['A', 'B'], [plainStep('s1', 'A', 'B', 0, 0)]);
		const err = await runEngine('preview', { scheme: cut }).catch((e: unknown) => e);
		expect(err).toBeInstanceOf(EngineError);
		expect((err as Error).message).toMatch(/steady state/);
	});

	it('sweeps point by point with progress and the same velocities as the sweep in this thread', async () => {
		const seen: number[] = [];
		const out = await runEngine('sweep', { scheme: PACER_STEPPER, variable: 'force', from: -5, to: 10, points: 16 }, { onProgress: (p) => seen.push(p.fraction) });
		expect(out.points).toEqual(velocitySweep(PACER_STEPPER, 'force', -5, 10, 16));
		// [der] progress only grows and stays below 1 until the result is back
		expect(seen.length).toBeGreaterThan(3);
		expect([...seen].sort((a, b) => a - b)).toEqual(seen);
		expect(Math.max(...seen)).toBeLessThan(1);
	});

	it('estimates work from the size: a tree of states has no cycles, K_n hits the cycle cap', () => {
		// [trade] a spanning tree has m = n − 1 steps: cyclomatic number 0, one "cycle" term for the empty set
		const chain = plainScheme('chain', ['A', 'B', 'C', 'D'], [plainStep('a', 'A', 'B', 1, 1), plainStep('b', 'B', 'C', 1, 1), plainStep('c', 'C', 'D', 1, 1)]);
		expect(auditWork(chain)).toBe(4 ** 3 + 1 * 4 * 200);
		// [pub] K30 has 435 edges and far more than 20,000 simple cycles (the enumeration cap)
		const k30 = completeScheme(30);
		expect(k30.steps).toHaveLength(435);
		expect(auditWork(k30)).toBe(30 ** 3 + 20_000 * 30 * 200);
		expect(sweepWork(k30, 41)).toBe(2 * 41 * 30 ** 3);
	});
});
