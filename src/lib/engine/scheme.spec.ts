import { describe, expect, it } from 'vitest';
import { PACER_STEPPER } from './examples';
import { formatPath, parseScheme, SCHEME_FORMAT } from './scheme';

const minimal = () => ({
	states: [{ id: 'A' }, { id: 'B' }],
	steps: [{ id: 's1', from: 'A', to: 'B', kForward: 10, kBackward: 1 }]
});

describe('parseScheme', () => {
	it('fills the documented defaults', () => {
		const r = parseScheme(minimal());
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.scheme.format).toBe(SCHEME_FORMAT);
		expect(r.scheme.temperatureK).toBe(298.15);
		expect(r.scheme.forcePN).toBe(0);
		expect(r.scheme.concentrationsM).toEqual({});
		expect(r.scheme.steps[0]).toMatchObject({
			binds: [],
			releases: [],
			displacementNm: 0,
			loadFraction: 0.5,
			relUncertaintyForward: null,
			relUncertaintyBackward: null
		});
	});

	it('accepts the demo scheme and a JSON round trip of it', () => {
		expect(parseScheme(JSON.parse(JSON.stringify(PACER_STEPPER))).ok).toBe(true);
	});

	it('reports every problem at once, each with its JSON path', () => {
		const input = {
			concentrationsM: { ATP: 1e-3 },
			reactions: [{ id: 'hyd', stoichiometry: { ATP: -1, ADP: 1 }, deltaG0kJPerMol: -30 }],
			states: [{ id: 'A' }, { id: 'B' }, { id: 'A' }, { id: 'C' }],
			steps: [
				{ id: 's1', from: 'A', to: 'B', kForward: 1, kBackward: 1, binds: ['ATP'] },
				{ id: 's1', from: 'B', to: 'B', kForward: 1, kBackward: 1 },
				{ id: 's3', from: 'A', to: 'Q', kForward: 1, kBackward: 1 },
				{ id: 's4', from: 'A', to: 'B', kForward: -2, kBackward: 'fast', releases: ['Mg'] }
			]
		};
		const r = parseScheme(input);
		expect(r.ok).toBe(false);
		if (r.ok) return;
		const paths = r.errors.map((e) => e.path);
		expect(paths).toEqual(
			expect.arrayContaining([
				'states[2].id',
				'steps[1].id',
				'steps[1].to',
				'steps[2].to',
				'steps[3].kForward',
				'steps[3].kBackward',
				'steps[3].releases[0]',
				'reactions[0].stoichiometry.ADP'
			])
		);
		for (const e of r.errors) expect(e.message.length).toBeGreaterThan(10);
		expect(r.errors.find((e) => e.path === 'steps[2].to')!.message).toMatch(/unknown state "Q"/);
		expect(r.errors.find((e) => e.path === 'steps[1].to')!.message).toMatch(/itself/);
	});

	it('rejects a disconnected scheme and says what to do', () => {
		const input = minimal();
		input.states.push({ id: 'C' });
		const r = parseScheme(input);
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.errors).toEqual([expect.objectContaining({ path: 'steps', message: expect.stringMatching(/disconnected.*"C"/) })]);
	});

	it('rejects non-finite rates, a wrong format and a non-object', () => {
		const bad = minimal() as Record<string, unknown>;
		bad.format = 'other/2';
		(bad.steps as Record<string, unknown>[])[0].kForward = Number.POSITIVE_INFINITY;
		const r = parseScheme(bad);
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.errors.map((e) => e.path).sort()).toEqual(['format', 'steps[0].kForward']);
		const top = parseScheme(42);
		expect(top.ok).toBe(false);
		if (!top.ok) expect(top.errors[0].path).toBe('$');
	});

	it('accepts a zero rate (it is a finding of the audit, not a parse error)', () => {
		const input = minimal();
		input.steps[0].kBackward = 0;
		expect(parseScheme(input).ok).toBe(true);
	});

	it('writes paths the way a reader of the JSON looks them up', () => {
		expect(formatPath(['steps', 3, 'kForward'])).toBe('steps[3].kForward');
		expect(formatPath(['reactions', 0, 'stoichiometry', 'ATP hydrolysis'])).toBe('reactions[0].stoichiometry["ATP hydrolysis"]');
		expect(formatPath([])).toBe('$');
	});
});
