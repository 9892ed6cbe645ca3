/**
 * Seeded random schemes for verification and benchmarks: connected multigraphs with log-uniform rates,
 * stiff variants (rates over many orders of magnitude), nearly decomposable ones (fast clusters joined by
 * very slow steps) and schemes built from state free energies (consistent at every load and concentration).
 *
 * Source: mulberry32 generator (T. Ettinger, public domain) [trade]; detailed balance from state free
 * energies, k+/k− = exp(−ΔG_step/kBT) (Hill 1989) [pub].
 * Cost: O(states + steps).
 * Invariants: same seed, same scheme; every scheme passes parseScheme; state ids S0…S(n−1), step ids s0…
 */
import { SCHEME_FORMAT, type Scheme, type SchemeStep } from './scheme';
import { AVOGADRO_PER_MOL, thermalEnergyPNnm } from './units';

export function mulberry32(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

export interface RandomSchemeOptions {
	states: number;
	steps: number;
	seed: number;
	/** log10 range of rate constants */
	log10Rates: [number, number];
	/** number of fast clusters joined by slow steps (1 = none) */
	clusters: number;
	/** log10 range of the rates of steps between clusters */
	log10SlowRates: [number, number];
	/** give steps random displacements (nm) */
	displacements: boolean;
}

const RANDOM_DEFAULTS: RandomSchemeOptions = {
	states: 6,
	steps: 9,
	seed: 1,
	log10Rates: [-1, 3],
	clusters: 1,
	log10SlowRates: [-9, -7],
	displacements: false
};

/** A step with the values parseScheme fills by default: no species, load shared half and half, no uncertainties. */
export function plainStep(
	id: string,
	from: string,
	to: string,
	kForward: number,
	kBackward: number,
	displacementNm = 0
): SchemeStep {
	return {
		id,
		from,
		to,
		kForward,
		kBackward,
		binds: [],
		releases: [],
		displacementNm,
		loadFraction: 0.5,
		relUncertaintyForward: null,
		relUncertaintyBackward: null
	};
}

/** A scheme at 298.15 K without load, species or reference reactions, over the given states and steps. */
export function plainScheme(name: string, stateIds: string[], steps: SchemeStep[]): Scheme {
	return {
		format: SCHEME_FORMAT,
		name,
		temperatureK: 298.15,
		forcePN: 0,
		stepSizeNm: null,
		concentrationsM: {},
		reactions: [],
		states: stateIds.map((id) => ({ id })),
		steps
	};
}

const stateIds = (n: number) => Array.from({ length: n }, (_, i) => `S${i}`);

function step(id: string, from: number, to: number, kForward: number, kBackward: number): SchemeStep {
	return plainStep(id, `S${from}`, `S${to}`, kForward, kBackward);
}

/** A random connected scheme: a random spanning tree plus extra steps (parallel ones allowed). */
export function randomScheme(options: Partial<RandomSchemeOptions> = {}): Scheme {
	const o = { ...RANDOM_DEFAULTS, ...options };
	const rand = mulberry32(o.seed);
	const cluster = (i: number) => Math.floor((i * o.clusters) / o.states);
	const logRate = (a: number, b: number) => {
		const [lo, hi] = cluster(a) === cluster(b) ? o.log10Rates : o.log10SlowRates;
		return 10 ** (lo + (hi - lo) * rand());
	};
	const pairs: [number, number][] = [];
	// tree inside clusters first, then one slow link from each cluster to an earlier one
	for (let i = 1; i < o.states; i++) {
		const sameCluster = [...Array(i).keys()].filter((j) => cluster(j) === cluster(i));
		const pool = sameCluster.length ? sameCluster : [...Array(i).keys()];
		pairs.push([pool[Math.floor(rand() * pool.length)], i]);
	}
	while (pairs.length < o.steps) {
		const a = Math.floor(rand() * o.states);
		let b = Math.floor(rand() * (o.states - 1));
		if (b >= a) b++;
		pairs.push([a, b]);
	}
	const steps = pairs.map(([a, b], s) => {
		const st = step(`s${s}`, a, b, logRate(a, b), logRate(a, b));
		if (o.displacements) st.displacementNm = Math.round((rand() * 16 - 4) * 10) / 10;
		return st;
	});
	return plainScheme(`random scheme ${o.states}/${o.steps} seed ${o.seed}`, stateIds(o.states), steps);
}

/**
 * A scheme whose rate constants follow from free energies: state energies G_i, species standard chemical
 * potentials μ°_x and barriers, so that kForward/kBackward = exp(−(G_to + Σ_rel μ° − G_from − Σ_bind μ°)/kBT).
 * Reference reactions span every exchange (hydrolysis plus one exchange reaction per product), each with
 * ΔG° = Σ ν μ°; such a scheme is consistent at every load and concentration.
 */
export function freeEnergyScheme(options: Partial<RandomSchemeOptions> = {}): Scheme {
	const o = { ...RANDOM_DEFAULTS, displacements: true, ...options };
	const base = randomScheme(o);
	const rand = mulberry32(o.seed ^ 0x5eed);
	const kT = thermalEnergyPNnm(base.temperatureK);
	const mu: Record<string, number> = { ATP: -8 * rand() - 12, ADP: -4 * rand(), Pi: -4 * rand() };
	const G = base.states.map(() => 6 * rand() - 3);
	const species = Object.keys(mu);
	const toKJ = (kTunits: number) => (kTunits * kT * 1e-21 * AVOGADRO_PER_MOL) / 1000;
	base.steps = base.steps.map((st) => {
		const binds = rand() < 0.3 ? [species[Math.floor(rand() * 3)]] : [];
		const releases = rand() < 0.3 ? [species[Math.floor(rand() * 3)]] : [];
		const a = Number(st.from.slice(1));
		const b = Number(st.to.slice(1));
		const dG =
			G[b] + releases.reduce((t, x) => t + mu[x], 0) - G[a] - binds.reduce((t, x) => t + mu[x], 0);
		const barrier = Math.max(0, dG) + 2 + 6 * rand();
		const prefactor = 10 ** (2 + 4 * rand());
		return {
			...st,
			binds,
			releases,
			kForward: prefactor * Math.exp(-(barrier - 0)),
			kBackward: prefactor * Math.exp(-(barrier - dG)),
			loadFraction: Math.round(rand() * 100) / 100
		};
	});
	base.concentrationsM = { ATP: 1e-3, ADP: 1e-5, Pi: 1e-3 };
	base.reactions = [
		{ id: 'ATP hydrolysis', stoichiometry: { ATP: -1, ADP: 1, Pi: 1 }, deltaG0kJPerMol: toKJ(mu.ADP + mu.Pi - mu.ATP) },
		{ id: 'ADP exchange', stoichiometry: { ADP: 1 }, deltaG0kJPerMol: toKJ(mu.ADP) },
		{ id: 'Pi exchange', stoichiometry: { Pi: 1 }, deltaG0kJPerMol: toKJ(mu.Pi) }
	];
	base.name = `free-energy scheme ${o.states}/${o.steps} seed ${o.seed}`;
	return base;
}

/** The complete graph K_n as a scheme, one step per pair with the given rates both ways. */
export function completeScheme(n: number, rate = 1): Scheme {
	const steps: SchemeStep[] = [];
	for (let a = 0; a < n; a++) for (let b = a + 1; b < n; b++) steps.push(step(`s${steps.length}`, a, b, rate, rate));
	return plainScheme(`complete graph K${n}`, stateIds(n), steps);
}
