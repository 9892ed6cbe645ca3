import Fraction from 'fraction.js';
import { describe, expect, it } from 'vitest';
import { auditScheme } from './audit';
import { chemistryModel, decomposeExchange } from './chemistry';
import { PACER_STEPPER, PACER_STEPPER_MISFIT } from './examples';
import { freeEnergyScheme, mulberry32 } from './random-scheme';
import { effectiveRates } from './rates';
import type { Scheme, SchemeReaction } from './scheme';

const HYDROLYSIS = { ATP: -1, ADP: 1, Pi: 1 };
const double = (deltaG0kJPerMol: number): SchemeReaction => ({ id: '2 ATP hydrolysis', stoichiometry: { ATP: -2, ADP: 2, Pi: 2 }, deltaG0kJPerMol });
const single: SchemeReaction = { id: 'ATP hydrolysis', stoichiometry: HYDROLYSIS, deltaG0kJPerMol: -30.5 };
const withReactions = (scheme: Scheme, reactions: SchemeReaction[]): Scheme => ({ ...scheme, reactions });

describe('net chemistry of cycles as rational combinations of reference reactions', () => {
	it('regression, a cycle worth half the only reference reaction was called unbalanced: it is ½ × "2 ATP hydrolysis"', () => {
		// Pacer-1 hydrolyses one ATP per cycle; 2 ATP → 2 ADP + 2 Pi with ΔG°' = 2 × (−30.5) kJ/mol [der from Hill 1989]
		const audit = auditScheme(withReactions(PACER_STEPPER, [double(-61)]));
		const [cycle] = audit.cycles;
		expect(cycle.verdict).toBe('consistent');
		expect(cycle.netReaction).toEqual({ '2 ATP hydrolysis': 0.5 });
		expect(Math.abs(cycle.deviationLog10!)).toBeLessThan(1e-12);
		// and the misfit is still found, by exactly one decade
		const misfit = auditScheme(withReactions(PACER_STEPPER_MISFIT, [double(-61)])).cycles[0];
		expect(misfit.verdict).toBe('violation');
		expect(misfit.deviationLog10).toBeCloseTo(-1, 12);
	});

	it('takes thirds exactly: one ATP is ⅓ of "3 ATP hydrolysis"', () => {
		const triple: SchemeReaction = { id: '3 ATP hydrolysis', stoichiometry: { ATP: -3, ADP: 3, Pi: 3 }, deltaG0kJPerMol: -91.5 };
		const [cycle] = auditScheme(withReactions(PACER_STEPPER, [triple])).cycles;
		expect(cycle.netReaction!['3 ATP hydrolysis']).toBe(1 / 3); // the correctly rounded rational [der]
		expect(Math.abs(cycle.deviationLog10!)).toBeLessThan(1e-12);
	});

	it('reproduces every balanced exchange exactly and rejects the others (seeded, checked in fraction.js arithmetic) [der]', () => {
		const scheme = freeEnergyScheme({ states: 6, steps: 12, seed: 9 });
		const extra: SchemeReaction = { id: 'ADP·Pi pair', stoichiometry: { ADP: 0.5, Pi: 0.5 }, deltaG0kJPerMol: 0 };
		const model = chemistryModel({ ...scheme, reactions: [...scheme.reactions, extra] }, effectiveRates(scheme).kT);
		const rand = mulberry32(77);
		let balanced = 0;
		for (let trial = 0; trial < 200; trial++) {
			const exchange = model.species.map(() => Math.floor(rand() * 7) - 3);
			const n = decomposeExchange(model, exchange);
			// every integer exchange in ATP, ADP, Pi is spanned by hydrolysis and the two exchange reactions
			expect(n).not.toBeNull();
			balanced++;
			model.species.forEach((x, i) => {
				let total = new Fraction(0);
				scheme.reactions.concat(extra).forEach((r, k) => (total = total.add(new Fraction(r.stoichiometry[x] ?? 0).mul(new Fraction(n![k])))));
				expect(total.equals(exchange[i])).toBe(true);
			});
		}
		expect(balanced).toBe(200);
		// a species no reaction mentions cannot be balanced
		const withMg = chemistryModel({ ...PACER_STEPPER, concentrationsM: { ...PACER_STEPPER.concentrationsM, Mg: 1e-3 } }, 4.1);
		const exchange = withMg.species.map((x) => (x === 'Mg' ? 1 : 0));
		expect(decomposeExchange(withMg, exchange)).toBeNull();
	});

	it('regression, verdicts changed with the order of two contradicting reactions: a finding names them, verdicts do not move', () => {
		const a = auditScheme(withReactions(PACER_STEPPER_MISFIT, [single, double(-65)]));
		const b = auditScheme(withReactions(PACER_STEPPER_MISFIT, [double(-65), single]));
		for (const audit of [a, b]) {
			const finding = audit.findings.find((f) => f.kind === 'reaction-contradiction');
			expect(finding?.message).toMatch(/"2 ATP hydrolysis" has the stoichiometry of 2 × "ATP hydrolysis"/);
			expect(finding?.message).toMatch(/ΔG°' is -65 kJ\/mol, not -61 kJ\/mol/);
		}
		expect(a.findings.find((f) => f.kind === 'reaction-contradiction')!.path).toBe('reactions[1].deltaG0kJPerMol');
		expect(b.findings.find((f) => f.kind === 'reaction-contradiction')!.path).toBe('reactions[0].deltaG0kJPerMol');
		expect(b.cycles.map((c) => [c.verdict, c.deviationLog10, c.netReaction])).toEqual(a.cycles.map((c) => [c.verdict, c.deviationLog10, c.netReaction]));
		// judged with the simpler reaction: the same deviation as with it alone
		const alone = auditScheme(withReactions(PACER_STEPPER_MISFIT, [single]));
		expect(a.cycles[0].deviationLog10).toBeCloseTo(alone.cycles[0].deviationLog10!, 12);
		expect(a.cycles[0].netReaction).toEqual({ 'ATP hydrolysis': 1 });
		// agreeing values are no contradiction
		expect(auditScheme(withReactions(PACER_STEPPER, [double(-61), single])).findings.some((f) => f.kind === 'reaction-contradiction')).toBe(false);
	});

	it.each([1, 2, 3, 4])(
		'no verdict depends on the order of the reference reactions or on adding a redundant one that agrees (seed %i) [der]',
		(seed) => {
			const consistent = freeEnergyScheme({ states: 6, steps: 11, seed });
			// some rates off by 10^0.3, so that there are violations to keep
			const scheme = { ...consistent, steps: consistent.steps.map((s, i) => (i % 4 === seed % 4 ? { ...s, kForward: s.kForward * 2 } : s)) };
			const [h, adp, pi] = scheme.reactions;
			// a redundant reaction: hydrolysis followed by taking up ADP, with the ΔG°' of that combination
			const redundant: SchemeReaction = {
				id: 'hydrolysis then ADP uptake',
				stoichiometry: { ATP: -1, Pi: 1 },
				deltaG0kJPerMol: h.deltaG0kJPerMol - adp.deltaG0kJPerMol
			};
			const reference = auditScheme(scheme);
			expect(reference.verdictCounts.violation).toBeGreaterThan(0);
			const key = (audit: ReturnType<typeof auditScheme>) => audit.cycles.map((c) => c.verdict);
			for (const reactions of [
				[pi, h, adp],
				[adp, pi, h],
				[redundant, h, adp, pi],
				[pi, redundant, adp, h]
			]) {
				const audit = auditScheme({ ...scheme, reactions });
				expect(key(audit)).toEqual(key(reference));
				audit.cycles.forEach((c, i) => expect(c.deviationLog10!).toBeCloseTo(reference.cycles[i].deviationLog10!, 10));
				expect(audit.findings.some((f) => f.kind === 'reaction-contradiction')).toBe(false);
			}
		}
	);
});
