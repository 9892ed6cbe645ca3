import { describe, expect, it } from 'vitest';
import { PACER_STEPPER, parseScheme } from '$lib/engine';
import { checkDraft, draftOf, errorsAt, parseEquation, startingDraft } from './scheme-draft';

describe('scheme draft', () => {
	it('round-trips a scheme through the editable tables unchanged', () => {
		const scheme = parseScheme(PACER_STEPPER);
		if (!scheme.ok) throw new Error('example scheme does not parse');
		const again = checkDraft(draftOf(scheme.scheme));
		expect(again.ok).toBe(true);
		expect(again.scheme).toEqual(scheme.scheme);
	});

	it('starts from a two-state scheme that passes validation', () => {
		const check = checkDraft(startingDraft('sketch'));
		expect(check.ok).toBe(true);
		expect(check.scheme?.states.map((s) => s.id)).toEqual(['A', 'B']);
	});

	it('reports a mistyped rate and an unknown species at the cells they came from', () => {
		const draft = startingDraft();
		draft.steps[0].kForward = '1,5e3x';
		draft.steps[0].binds = 'ATP';
		const check = checkDraft(draft);
		expect(check.ok).toBe(false);
		expect(errorsAt(check.errors, 'steps[0].kForward')).toHaveLength(1);
		expect(errorsAt(check.errors, 'steps[0].binds')[0]?.message).toMatch(/ATP.*no concentration/);
		expect(errorsAt(check.errors, 'steps[0].kBackward')).toHaveLength(0);
	});

	it('reads reaction equations with counts and refuses text without one arrow', () => {
		expect(parseEquation('ATP → ADP + Pi')).toEqual({ ok: true, stoichiometry: { ATP: -1, ADP: 1, Pi: 1 } });
		expect(parseEquation('2 ADP -> ATP + AMP')).toEqual({ ok: true, stoichiometry: { ADP: -2, ATP: 1, AMP: 1 } });
		expect(parseEquation('ATP + ADP').ok).toBe(false);
		const draft = startingDraft();
		draft.reactions.push({ id: 'hydrolysis', equation: 'ATP ADP', deltaG0kJPerMol: '-30.5' });
		expect(errorsAt(checkDraft(draft).errors, 'reactions[0].stoichiometry')).toHaveLength(1);
	});
});
