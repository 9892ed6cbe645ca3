/**
 * Invented demo schemes for the UI, the CLI and the tests: the "Pacer-1" stepper of the fictional
 * Kestrel Motility Lab (one ATP and 8 nm per cycle), consistent by construction, and a copy with a mistyped
 * rate that breaks consistency. Rates are invented.
 *
 * Source: none — an invented scenario; its closing rate follows from Σ ln kF − Σ ln kB = −ΔG°'/RT for a
 * cycle that hydrolyses one ATP [der].
 * Cost: O(1).
 * Invariants: both schemes pass parseScheme.
 */
import { SCHEME_FORMAT, type Scheme } from './scheme';
import { molarThermalEnergyKJPerMol } from './units';

const T = 298.15;
const DG0 = -30.5;

function pacer(): Scheme {
	const steps = [
		{ id: 'ATP binding', from: 'E', to: 'T', kForward: 2e6, kBackward: 20, binds: ['ATP'], releases: [], displacementNm: 0 },
		{ id: 'power stroke', from: 'T', to: 'DP', kForward: 300, kBackward: 2, binds: [], releases: [], displacementNm: 8 },
		{ id: 'Pi release', from: 'DP', to: 'D', kForward: 250, kBackward: 100, binds: [], releases: ['Pi'], displacementNm: 0 },
		{ id: 'ADP release', from: 'D', to: 'E', kForward: 150, kBackward: 0, binds: [], releases: ['ADP'], displacementNm: 0 }
	];
	let lnRatio = 0;
	for (const s of steps.slice(0, 3)) lnRatio += Math.log(s.kForward) - Math.log(s.kBackward);
	lnRatio += Math.log(steps[3].kForward);
	steps[3].kBackward = Math.exp(lnRatio + DG0 / molarThermalEnergyKJPerMol(T));
	return {
		format: SCHEME_FORMAT,
		name: 'Pacer-1 stepper (Kestrel Motility Lab, invented)',
		temperatureK: T,
		forcePN: 0,
		stepSizeNm: 8,
		concentrationsM: { ATP: 1e-3, ADP: 1e-5, Pi: 1e-3 },
		reactions: [{ id: 'ATP hydrolysis', stoichiometry: { ATP: -1, ADP: 1, Pi: 1 }, deltaG0kJPerMol: DG0 }],
		states: [{ id: 'E', label: 'empty' }, { id: 'T', label: 'ATP bound' }, { id: 'DP', label: 'ADP·Pi' }, { id: 'D', label: 'ADP' }],
		steps: steps.map((s) => ({
			...s,
			loadFraction: 0.5,
			relUncertaintyForward: null,
			relUncertaintyBackward: null
		}))
	};
}

export const PACER_STEPPER: Scheme = pacer();

/** The Pacer-1 scheme with a mistyped Pi-release back rate (1000 instead of 100): a violation. */
export const PACER_STEPPER_MISFIT: Scheme = {
	...PACER_STEPPER,
	name: 'Pacer-1 stepper with a mistyped rate (invented)',
	steps: PACER_STEPPER.steps.map((s) => (s.id === 'Pi release' ? { ...s, kBackward: 1000 } : s))
};
