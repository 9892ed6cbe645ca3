/**
 * The full audit of a scheme (escapement.audit/1): steady state, step fluxes, every simple cycle with its
 * thermodynamic verdict and Hill fluxes, a cycle-basis judgement, motor observables, findings and a
 * proposed minimal correction.
 *
 * Source: composition of the engine's modules; see each of them for the published methods.
 * Cost: O(n³) for the steady state + O(cycles · (length·species + m³)) for the cycles (m = states off a
 * cycle) + O(basis · n) for the basis.
 * Invariants: the JSON keys of issue 3 exactly, plus the documented extra keys `engineVersion`,
 * `conditions`, `verdictCounts`, `cycleAffinitiesKT` (parallel to `cycles`), `basisVerdicts`, `findings`,
 * `cautions` and `correction` (null when no cycle is a violation). Non-finite numbers become null.
 */
import { chemistryModel } from './chemistry';
import { CONSISTENCY_DEFAULTS, cycleJudge, type CycleJudgement, type Verdict } from './consistency';
import { CYCLE_DEFAULTS, cycleBasis, enumerateCycles, type Cycle } from './cycles';
import { cycleFluxes } from './fluxes';
import { observablesOf, type Observables } from './observables';
import { effectiveRates, type RateTable } from './rates';
import { AUDIT_FORMAT, ENGINE_VERSION, type Scheme } from './scheme';
import { steadyState, stepFluxes } from './steady-state';
import { proposeCorrection, type Correction } from './correction';

export const AUDIT_DEFAULTS = {
	/** cap on enumerated cycles; 0 judges on the cycle basis only (large schemes) */
	maxCycles: CYCLE_DEFAULTS.maxCycles,
	toleranceLog10: CONSISTENCY_DEFAULTS.toleranceLog10,
	sigmaFactor: CONSISTENCY_DEFAULTS.sigmaFactor,
	/** propose a minimal correction when a cycle is a violation */
	correction: true,
	/** multiply–adds allowed for cycle fluxes (Σ over cycles of (states off the cycle)³); past it fluxes are null */
	maxFluxWork: 3e8
};
export type AuditOptions = typeof AUDIT_DEFAULTS;

export interface AuditCycleStep {
	id: string;
	direction: 1 | -1;
}

export interface AuditCycle {
	states: string[];
	steps: AuditCycleStep[];
	log10RateRatio: number | null;
	expectedLog10: number | null;
	deviationLog10: number | null;
	sigmaLog10: number | null;
	verdict: Verdict;
	forwardFlux: number | null;
	backwardFlux: number | null;
	netFlux: number | null;
	netReaction: Record<string, number> | null;
	displacementNm: number;
}

export interface BasisVerdict {
	states: string[];
	steps: AuditCycleStep[];
	verdict: Verdict;
	deviationLog10: number | null;
}

export interface Finding {
	kind: 'zero-rate' | 'transient-state' | 'cycle-cap' | 'violation' | 'irreversible' | 'unbalanced';
	path: string | null;
	message: string;
}

export interface Audit {
	format: typeof AUDIT_FORMAT;
	states: { id: string; probability: number; probabilityLog10: number | null }[];
	steps: { id: string; forwardRate: number; backwardRate: number; netFlux: number }[];
	cycles: AuditCycle[];
	cycleCount: number;
	cyclesComplete: boolean;
	observables: Observables;
	// documented extra keys
	engineVersion: string;
	conditions: { temperatureK: number; forcePN: number; kTpNnm: number; concentrationsM: Record<string, number> };
	verdictCounts: Record<Verdict, number>;
	cycleAffinitiesKT: (number | null)[];
	basisVerdicts: BasisVerdict[];
	findings: Finding[];
	cautions: string[];
	correction: Correction | null;
}

const finite = (x: number): number | null => (Number.isFinite(x) ? x : null);

function cycleSteps(table: RateTable, cycle: Cycle): AuditCycleStep[] {
	return cycle.steps.map((s) => ({ id: table.stepIds[s.step], direction: s.direction }));
}

function netReaction(judgement: CycleJudgement, reactionIds: string[]): Record<string, number> | null {
	if (!judgement.reactionCounts) return null;
	const out: Record<string, number> = {};
	judgement.reactionCounts.forEach((c, r) => {
		if (c !== 0) out[reactionIds[r]] = c;
	});
	return out;
}

export function auditScheme(scheme: Scheme, options: Partial<AuditOptions> = {}): Audit {
	const o = { ...AUDIT_DEFAULTS, ...options };
	const table = effectiveRates(scheme);
	const chemistry = chemistryModel(scheme, table.kT);
	const ss = steadyState(table);
	const J = stepFluxes(table, ss.p);
	const graph = { n: table.n, m: table.m, from: table.from, to: table.to };
	const judge = cycleJudge(table, chemistry, scheme, o);

	const enumeration =
		o.maxCycles > 0 ? enumerateCycles(graph, { maxCycles: o.maxCycles }) : { cycles: [] as Cycle[], complete: false };
	const judgements = enumeration.cycles.map(judge);
	const fluxes = cycleFluxes(
		ss.K,
		table.n,
		ss.logSigma,
		enumeration.cycles,
		judgements.map((j) => j.lnForward),
		judgements.map((j) => j.lnBackward),
		o.maxFluxWork
	);
	const basis = cycleBasis(graph);
	const basisJudgements = basis.map(judge);

	const verdictCounts: Record<Verdict, number> = { consistent: 0, violation: 0, irreversible: 0, unbalanced: 0 };
	for (const j of enumeration.complete ? judgements : basisJudgements) verdictCounts[j.verdict]++;

	const cycles: AuditCycle[] = enumeration.cycles.map((cycle, c) => {
		const j = judgements[c];
		return {
			states: cycle.states.map((i) => table.stateIds[i]),
			steps: cycleSteps(table, cycle),
			log10RateRatio: j.log10RateRatio,
			expectedLog10: j.expectedLog10,
			deviationLog10: j.deviationLog10,
			sigmaLog10: j.sigmaLog10,
			verdict: j.verdict,
			forwardFlux: finite(fluxes.forward[c]),
			backwardFlux: finite(fluxes.backward[c]),
			netFlux: finite(fluxes.forward[c] - fluxes.backward[c]),
			netReaction: netReaction(j, chemistry.reactionIds),
			displacementNm: j.displacementNm
		};
	});

	const findings: Finding[] = [];
	const cautions: string[] = [];
	scheme.steps.forEach((step, s) => {
		for (const rate of ['kForward', 'kBackward'] as const)
			if (step[rate] === 0)
				findings.push({
					kind: 'zero-rate',
					path: `steps[${s}].${rate}`,
					message: `step "${step.id}" has ${rate} = 0: every cycle through it is irreversible (infinite affinity); give it a small positive rate that satisfies detailed balance`
				});
	});
	ss.p.forEach((p, i) => {
		if (p === 0)
			findings.push({
				kind: 'transient-state',
				path: `states[${i}]`,
				message: `state "${table.stateIds[i]}" is never occupied at steady state: zero rates stop every way back into it`
			});
	});
	if (!enumeration.complete) {
		const why =
			o.maxCycles > 0
				? `cycle enumeration stopped at ${enumeration.cycles.length} cycles (cap ${o.maxCycles})`
				: 'cycles were not enumerated (maxCycles 0)';
		findings.push({
			kind: 'cycle-cap',
			path: null,
			message: `${why}; consistency is judged on a cycle basis of ${basis.length} cycles, which decides all cycles`
		});
		cautions.push('cycle fluxes, cycle form of the entropy production and per-cycle verdicts cover only the listed cycles');
	}
	if (fluxes.computed < enumeration.cycles.length)
		cautions.push(
			`cycle fluxes are given for the first ${fluxes.computed} of ${enumeration.cycles.length} listed cycles (work budget maxFluxWork); the steady state, step fluxes and observables are complete`
		);
	const judged = enumeration.complete ? { cycles: enumeration.cycles, j: judgements } : { cycles: basis, j: basisJudgements };
	for (const kind of ['violation', 'unbalanced'] as const) {
		const worst = judged.j.filter((x) => x.verdict === kind).length;
		if (worst)
			findings.push({
				kind,
				path: null,
				message:
					kind === 'violation'
						? `${worst} cycle(s) break thermodynamic consistency (${enumeration.complete ? 'all cycles' : 'basis cycles'}); see correction for the smallest rate changes that restore it`
						: `${worst} cycle(s) have a net exchange of species that is no whole combination of the reference reactions; add the missing reaction or fix binds/releases`
			});
	}
	const observables = observablesOf(scheme, table, ss, chemistry, J);
	const violation = judged.j.some((x) => x.verdict === 'violation');
	return {
		format: AUDIT_FORMAT,
		states: table.stateIds.map((id, i) => ({
			id,
			probability: ss.p[i],
			probabilityLog10: ss.p[i] > 0 ? Math.log10(ss.p[i]) : null
		})),
		steps: table.stepIds.map((id, s) => ({
			id,
			forwardRate: table.kPlus[s],
			backwardRate: table.kMinus[s],
			netFlux: J[s]
		})),
		cycles,
		cycleCount: cycles.length,
		cyclesComplete: enumeration.complete,
		observables,
		engineVersion: ENGINE_VERSION,
		conditions: {
			temperatureK: scheme.temperatureK,
			forcePN: scheme.forcePN,
			kTpNnm: table.kT,
			concentrationsM: { ...scheme.concentrationsM }
		},
		verdictCounts,
		cycleAffinitiesKT: judgements.map((j) => (j.log10RateRatio === null ? null : j.log10RateRatio * Math.LN10)),
		basisVerdicts: basis.map((cycle, c) => ({
			states: cycle.states.map((i) => table.stateIds[i]),
			steps: cycleSteps(table, cycle),
			verdict: basisJudgements[c].verdict,
			deviationLog10: basisJudgements[c].deviationLog10
		})),
		findings,
		cautions,
		correction: o.correction && violation ? proposeCorrection(scheme, table, basis, basisJudgements) : null
	};
}
