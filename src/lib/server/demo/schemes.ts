/**
 * The demo lab's three invented schemes. Backward rates of the consistent schemes follow from a free-energy
 * landscape (a standard free energy per state and a standard chemical potential per species), which makes every
 * cycle consistent at every load and concentration by construction:
 *   ln(kF/kB) = G_from − G_to + Σ_binds μ°_x − Σ_releases μ°_x   (in kBT, at zero load)  [der]
 * with μ°_ATP − μ°_ADP − μ°_Pi = −ΔG°'/RT for ATP hydrolysis. All names, motors and rates are invented.
 */
import { molarThermalEnergyKJPerMol, SCHEME_FORMAT, type Scheme } from '../../engine';

const T = 298.15;
const DG0 = -30.5;
const RT = molarThermalEnergyKJPerMol(T);
/** Standard chemical potentials in kBT: only differences matter. */
const MU: Record<string, number> = { ATP: -DG0 / RT, ADP: 0, Pi: 0 };
const HYDROLYSIS = [{ id: 'ATP hydrolysis', stoichiometry: { ATP: -1, ADP: 1, Pi: 1 }, deltaG0kJPerMol: DG0 }];

interface StepSpec {
	id: string;
	from: string;
	to: string;
	kForward: number;
	binds?: string[];
	releases?: string[];
	displacementNm?: number;
	loadFraction?: number;
	uf?: number;
	ub?: number;
}

function fromLandscape(G: Record<string, number>, specs: StepSpec[]) {
	return specs.map((s) => {
		const binds = s.binds ?? [];
		const releases = s.releases ?? [];
		const lnRatio = G[s.from] - G[s.to] + binds.reduce((a, x) => a + MU[x], 0) - releases.reduce((a, x) => a + MU[x], 0);
		return {
			id: s.id,
			from: s.from,
			to: s.to,
			kForward: s.kForward,
			kBackward: Number((s.kForward * Math.exp(-lnRatio)).toPrecision(6)),
			binds,
			releases,
			displacementNm: s.displacementNm ?? 0,
			loadFraction: s.loadFraction ?? 0.5,
			relUncertaintyForward: s.uf ?? 0.15,
			relUncertaintyBackward: s.ub ?? 0.3
		};
	});
}

/** K-7: a two-headed stepper, 8 nm per ATP, with a futile branch that hydrolyses ATP without stepping. */
export function stepperWithFutileBranch(): Scheme {
	const G = { E: 0, T: -4, S: -9, DP: -10.5, D: -7, X: -6 };
	return {
		format: SCHEME_FORMAT,
		name: 'K-7 stepper with futile branch',
		temperatureK: T,
		forcePN: 1,
		stepSizeNm: 8,
		concentrationsM: { ATP: 1e-3, ADP: 1e-5, Pi: 1e-3 },
		reactions: HYDROLYSIS,
		states: [
			{ id: 'E', label: 'rear head ADP, front head empty' },
			{ id: 'T', label: 'front head ATP' },
			{ id: 'S', label: 'neck linker docked, stepped 8 nm' },
			{ id: 'DP', label: 'rear head ADP·Pi' },
			{ id: 'D', label: 'Pi released, rear head ADP' },
			{ id: 'X', label: 'ATP hydrolysed before docking (futile)' }
		],
		steps: fromLandscape(G, [
			{ id: 'ATP on', from: 'E', to: 'T', kForward: 2.2e6, binds: ['ATP'], uf: 0.1, ub: 0.4 },
			{ id: 'dock and step', from: 'T', to: 'S', kForward: 650, displacementNm: 8, loadFraction: 0.3, uf: 0.12, ub: 0.5 },
			{ id: 'hydrolysis', from: 'S', to: 'DP', kForward: 320, uf: 0.2, ub: 0.5 },
			{ id: 'Pi off', from: 'DP', to: 'D', kForward: 210, releases: ['Pi'], uf: 0.2, ub: 0.5 },
			{ id: 'ADP off', from: 'D', to: 'E', kForward: 160, releases: ['ADP'], uf: 0.15, ub: 0.4 },
			{ id: 'futile hydrolysis', from: 'T', to: 'X', kForward: 18, uf: 0.3, ub: 0.6 },
			{ id: 'futile release', from: 'X', to: 'E', kForward: 40, releases: ['ADP', 'Pi'], uf: 0.3, ub: 0.6 }
		])
	};
}

/**
 * a three-site rotary motor. Each site binds ATP with an 80° substep and releases ADP and Pi with a 40°
 * substep; occasionally a site hydrolyses and releases without turning. Rotation is given as arc length at a
 * 1 nm lever (120° = 2.094 nm), so the load in pN is the opposing torque in pN·nm.
 */
export function threeSiteRotary(): Scheme {
	const arc = (deg: number) => Number(((deg * Math.PI) / 180).toFixed(4));
	const G: Record<string, number> = {};
	const states: Scheme['states'] = [];
	const specs: StepSpec[] = [];
	for (let k = 0; k < 3; k++) {
		const next = (k + 1) % 3;
		G[`W${k}`] = 0;
		G[`B${k}`] = -6;
		states.push({ id: `W${k}`, label: `waiting for ATP at ${k * 120}°` }, { id: `B${k}`, label: `ATP bound, turned to ${k * 120 + 80}°` });
		specs.push(
			{ id: `bind ${k}`, from: `W${k}`, to: `B${k}`, kForward: 3e7, binds: ['ATP'], displacementNm: arc(80), loadFraction: 0.6, uf: 0.1, ub: 0.3 },
			{ id: `release ${k}`, from: `B${k}`, to: `W${next}`, kForward: 900, releases: ['ADP', 'Pi'], displacementNm: arc(40), loadFraction: 0.4, uf: 0.15, ub: 0.4 },
			{ id: `slip ${k}`, from: `B${k}`, to: `W${k}`, kForward: 2, releases: ['ADP', 'Pi'], displacementNm: -arc(80), uf: 0.5, ub: 0.5 }
		);
	}
	return {
		format: SCHEME_FORMAT,
		name: 'R-3 rotary motor, three catalytic sites',
		temperatureK: T,
		forcePN: 10,
		stepSizeNm: arc(120),
		concentrationsM: { ATP: 2e-3, ADP: 5e-5, Pi: 1e-3 },
		reactions: HYDROLYSIS,
		states,
		steps: fromLandscape(G, specs)
	};
}

/**
 * K-7 assembled from several papers: the futile branch's product rebinding rate comes from a study at another
 * temperature (40 times too fast for this landscape), and the reverse of ADP release was never measured (entered as 0). Deliberately
 * inconsistent, to show what a violation and an irreversible cycle look like.
 */
export function compositeWithViolation(): Scheme {
	const base = stepperWithFutileBranch();
	const steps = base.steps.map((s) => {
		if (s.id === 'futile release') return { ...s, kBackward: s.kBackward * 40 };
		if (s.id === 'ADP off') return { ...s, kBackward: 0 };
		return s;
	});
	return { ...base, name: 'K-7 literature composite', steps };
}
