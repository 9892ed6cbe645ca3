/**
 * The filled-in example of the template: an invented scenario, the Kestrel Motility Lab's "Orrin-1", a
 * made-up two-headed stepping motor with 8 nm steps. Its rates are invented; the backward rates of the
 * last step and of the futile branch are derived from ΔG°' of ATP hydrolysis, so every cycle of the
 * example is thermodynamically consistent (to the 4 significant digits written on the sheet).
 */
import { GAS_CONSTANT_J_PER_MOL_K } from './units';
import type { SchemeJson } from './to-scheme';

const T = 298.15;
const DG0 = -30.5;
/** Equilibrium constant of ATP hydrolysis per M, exp(−ΔG°'/RT). */
const K0 = Math.exp((-DG0 * 1000) / (GAS_CONSTANT_J_PER_MOL_K * T));
const round4 = (x: number) => Number(x.toPrecision(4));

const kf = { s1: 2.0e6, s2: 310, s3: 240, s4: 95, s5: 3.5 };
const kb = { s1: 35, s2: 4.2, s3: 1.6e3 };
// Cycle s1 s2 s3 s4 (T0→T1→T2→T3→T0) and cycle s1 s5 s4 (T0→T1→T3→T0) each hydrolyse one ATP.
const kb4 = round4((kf.s1 * kf.s2 * kf.s3 * kf.s4) / (kb.s1 * kb.s2 * kb.s3 * K0));
const kb5 = round4((kf.s1 * kf.s5 * kf.s4) / (kb.s1 * kb4 * K0));

export const EXAMPLE_LAB = 'Kestrel Motility Lab';

export const EXAMPLE_SCHEME: SchemeJson = {
	format: 'escapement.scheme/1',
	name: 'Orrin-1 stepping cycle (Kestrel Motility Lab, invented example)',
	temperatureK: T,
	forcePN: 2,
	stepSizeNm: 8,
	concentrationsM: { ATP: 1e-3, ADP: 2e-5, Pi: 1e-3 },
	reactions: [{ id: 'ATP hydrolysis', stoichiometry: { ATP: -1, ADP: 1, Pi: 1 }, deltaG0kJPerMol: DG0 }],
	states: [
		{ id: 'T0', label: 'rear head ADP, front head empty' },
		{ id: 'T1', label: 'front head ATP' },
		{ id: 'T2', label: 'stepped forward, ADP·Pi' },
		{ id: 'T3', label: 'ADP, phosphate released' }
	],
	steps: [
		{ id: 's1', from: 'T0', to: 'T1', kForward: kf.s1, kBackward: kb.s1, binds: ['ATP'], relUncertaintyForward: 0.1, relUncertaintyBackward: 0.25 },
		{ id: 's2', from: 'T1', to: 'T2', kForward: kf.s2, kBackward: kb.s2, displacementNm: 8, loadFraction: 0.35, relUncertaintyForward: 0.08, relUncertaintyBackward: 0.3 },
		{ id: 's3', from: 'T2', to: 'T3', kForward: kf.s3, kBackward: kb.s3, releases: ['Pi'], relUncertaintyForward: 0.15, relUncertaintyBackward: 0.5 },
		{ id: 's4', from: 'T3', to: 'T0', kForward: kf.s4, kBackward: kb4, releases: ['ADP'], relUncertaintyForward: 0.1, relUncertaintyBackward: 0.4 },
		{ id: 's5', from: 'T1', to: 'T3', kForward: kf.s5, kBackward: kb5, releases: ['Pi'], relUncertaintyForward: 0.3, relUncertaintyBackward: 0.5 }
	]
};

export const EXAMPLE_NOTES: Record<string, string> = {
	s1: 'ATP docking, stopped-flow (invented)',
	s2: 'power stroke; optical trap (invented)',
	s3: 'phosphate release (invented)',
	s4: 'ADP release; back rate from ΔG°′',
	s5: 'futile hydrolysis; back rate from ΔG°′'
};
