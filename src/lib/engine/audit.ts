/**
 * The full audit of a scheme (escapement.audit/1): steady state, step fluxes, every simple cycle with its
 * thermodynamic verdict and Hill fluxes, a cycle-basis judgement, motor observables, findings and a
 * proposed minimal correction.
 *
 * Source: composition of the engine's modules; see each of them for the published methods.
 * Cost: O(n³) for the steady state + O(cycles · (length·species + m³)) for the cycles (m = states off a
 * cycle) + O(basis · n) for the basis + one steady state per stall-force evaluation (none for a tight bracket,
 * about 50 for a scan; skipped past maxStallWork).
 * Invariants: the JSON keys of issue 3 exactly, plus the documented extra keys `observables.stallForcePN`,
 * `observables.stallForcesPN`, `observables.efficiencyRegime`, `observables.efficiencyNote`, `engineVersion`,
 * `conditions`, `verdictCounts` (verdicts of every distinct cycle judged: the listed cycles and the basis
 * cycles), `cycleAffinitiesKT` (parallel to `cycles`), `basisVerdicts`, `consistencyComplete` (true only when
 * no cycle is left undecided: every cycle listed, or the basis deviations sum to within the tolerance, which
 * bounds every cycle's deviation), `consistencyScope` (what was and was not checked, with that bound),
 * `findings`, `cautions` and `correction` (null when no judged cycle or condition is a violation).
 * Non-finite numbers become null.
 */
import { chemistryModel, isBalanced } from './chemistry';
import { checkBasis, CONSISTENCY_DEFAULTS, cycleJudge, type CycleJudgement, type Verdict } from './consistency';
import { CYCLE_DEFAULTS, cycleBasis, enumerateCycles, type Cycle, type EnumerationStop } from './cycles';
import { cycleFluxes } from './fluxes';
import { efficiency, type EfficiencyRegime } from './efficiency';
import { observablesOf, type Observables } from './observables';
import { stallSearch } from './stall';
import { effectiveRates, type RateTable } from './rates';
import { AUDIT_FORMAT, ENGINE_VERSION, type Scheme } from './scheme';
import { steadyState, stepFlows } from './steady-state';
import { proposeCorrection, type Correction } from './correction';

export const AUDIT_DEFAULTS = {
	/** cap on enumerated cycles; 0 judges on the cycle basis only (large schemes) */
	maxCycles: CYCLE_DEFAULTS.maxCycles,
	toleranceLog10: CONSISTENCY_DEFAULTS.toleranceLog10,
	sigmaFactor: CONSISTENCY_DEFAULTS.sigmaFactor,
	/** propose a minimal correction when a cycle is a violation */
	correction: true,
	/** multiply–adds allowed for cycle fluxes (Σ over cycles of (states off the cycle)³); past it fluxes are null */
	maxFluxWork: 3e8,
	/** multiply–adds allowed for the stall-force scan (steady states × states³); past it the audit leaves it out */
	maxStallWork: 3e7
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

/** The observables with the efficiency's regime and the stall forces (both documented extra keys). */
export interface AuditObservables extends Observables {
	/** 'motor' or 'synthase' when efficiency has a value */
	efficiencyRegime: EfficiencyRegime | null;
	/** why efficiency is null */
	efficiencyNote: string | null;
	/** the sign change of V(F) nearest zero load, null when there is none (a finding says why) */
	stallForcePN: number | null;
	/** every sign change of V(F) in the searched range, ascending; null when it was not searched */
	stallForcesPN: number[] | null;
}

export interface Finding {
	kind:
		| 'zero-rate'
		| 'transient-state'
		| 'cycle-cap'
		| 'consistency-incomplete'
		| 'reaction-contradiction'
		| 'violation'
		| 'irreversible'
		| 'unbalanced'
		| 'correction-infeasible'
		| 'stall-force';
	path: string | null;
	message: string;
}

/** A balanced combination of basis cycles that are unbalanced on their own (indices into basisVerdicts). */
export interface BalancedCombination {
	basisCycles: number[];
	coefficients: number[];
	deviationLog10: number;
	sigmaLog10: number | null;
	verdict: 'consistent' | 'violation';
}

/** What the consistency verdicts cover. */
export interface ConsistencyScope {
	cyclesListed: number;
	/** why the listing is incomplete; null when every cycle is listed */
	listingStoppedBy: EnumerationStop | 'not enumerated' | null;
	basisCycles: number;
	basisIrreversible: number;
	basisUnbalanced: number;
	/** independent conditions judged: reversible balanced basis cycles and balanced combinations */
	conditionsJudged: number;
	balancedCombinations: BalancedCombination[];
	/** no reversible balanced cycle deviates by more (log10): the sum of |deviation| over the conditions */
	deviationBoundLog10: number;
	toleranceLog10: number;
	/** in words: what was checked and what was not */
	summary: string;
}

export interface Audit {
	format: typeof AUDIT_FORMAT;
	states: { id: string; probability: number; probabilityLog10: number | null }[];
	steps: { id: string; forwardRate: number; backwardRate: number; netFlux: number }[];
	cycles: AuditCycle[];
	cycleCount: number;
	cyclesComplete: boolean;
	observables: AuditObservables;
	// documented extra keys
	engineVersion: string;
	conditions: { temperatureK: number; forcePN: number; kTpNnm: number; concentrationsM: Record<string, number> };
	verdictCounts: Record<Verdict, number>;
	cycleAffinitiesKT: (number | null)[];
	basisVerdicts: BasisVerdict[];
	consistencyComplete: boolean;
	consistencyScope: ConsistencyScope;
	findings: Finding[];
	cautions: string[];
	correction: Correction | null;
}

const finite = (x: number): number | null => (Number.isFinite(x) ? x : null);
const cycleKey = (cycle: Cycle) =>
	cycle.steps
		.map((s) => s.step)
		.sort((a, b) => a - b)
		.join(',');
const log10Text = (x: number) => Number(x.toPrecision(3)).toString();

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
	const flows = stepFlows(table, ss);
	const J = flows.net;
	const graph = { n: table.n, m: table.m, from: table.from, to: table.to };
	const judge = cycleJudge(table, chemistry, scheme, o);

	const enumeration =
		o.maxCycles > 0
			? enumerateCycles(graph, { maxCycles: o.maxCycles })
			: { cycles: [] as Cycle[], complete: false, stoppedBy: 'not enumerated' as const };
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
	// the spanning tree takes reversible steps with balanced chemistry first, so that zero rates and unbalanced
	// steps cannot hide in the tree paths of the cycles that decide the rest
	const X = chemistry.species.length;
	const preference = new Uint8Array(table.m);
	for (let s = 0; s < table.m; s++) {
		const reversible = Number.isFinite(table.lnPlus[s]) && Number.isFinite(table.lnMinus[s]);
		const balanced = isBalanced(chemistry, chemistry.stepExchange.subarray(s * X, (s + 1) * X));
		preference[s] = reversible ? (balanced ? 0 : 1) : 2;
	}
	const basis = cycleBasis(graph, preference);
	const basisJudgements = basis.map(judge);
	const check = checkBasis(basis, basisJudgements, table, chemistry, scheme, o);

	// count every distinct cycle judged: the listed ones, and the basis cycles not among them
	const verdictCounts: Record<Verdict, number> = { consistent: 0, violation: 0, irreversible: 0, unbalanced: 0 };
	for (const j of judgements) verdictCounts[j.verdict]++;
	let judgedCycles = judgements.length;
	if (!enumeration.complete) {
		const listed = new Set(enumeration.cycles.map(cycleKey));
		basis.forEach((cycle, b) => {
			if (listed.has(cycleKey(cycle))) return;
			verdictCounts[basisJudgements[b].verdict]++;
			judgedCycles++;
		});
	}
	const combinationViolations = check.conditions.filter((c) => c.basisCycles.length > 1 && c.verdict === 'violation').length;
	const consistencyComplete = enumeration.complete || check.deviationBoundLog10 <= o.toleranceLog10;

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
			netFlux: finite(fluxes.net[c]),
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
	ss.logP.forEach((logP, i) => {
		if (logP === -Infinity)
			findings.push({
				kind: 'transient-state',
				path: `states[${i}]`,
				message: `state "${table.stateIds[i]}" is never occupied at steady state: zero rates stop every way back into it`
			});
	});
	const bound = log10Text(check.deviationBoundLog10);
	const conditionsText = `${check.conditions.length} independent condition${check.conditions.length === 1 ? '' : 's'} (${check.conditions.length - check.combinations} reversible balanced basis cycle${check.conditions.length - check.combinations === 1 ? '' : 's'}${check.combinations ? ` and ${check.combinations} balanced combination${check.combinations === 1 ? '' : 's'} of unbalanced ones` : ''})`;
	let listingText: string;
	const listedText = `${enumeration.cycles.length} cycle${enumeration.cycles.length === 1 ? '' : 's'}`;
	if (enumeration.stoppedBy === 'cap') listingText = `cycle enumeration stopped at ${listedText}: the cap maxCycles = ${o.maxCycles} was reached`;
	else if (enumeration.stoppedBy === 'work budget')
		listingText = `cycle enumeration stopped at ${listedText}: the search used up its work budget (the cap maxCycles = ${o.maxCycles} was not reached)`;
	else if (enumeration.stoppedBy === 'not enumerated') listingText = 'cycles were not enumerated (maxCycles 0)';
	else listingText = `every simple cycle (${enumeration.cycles.length}) was enumerated and judged`;
	let scopeText: string;
	if (enumeration.complete) scopeText = `${listingText}.`;
	else if (consistencyComplete)
		scopeText = `${listingText}. The cycles not listed are decided by a cycle basis of ${basis.length} cycles with ${conditionsText}: their deviations sum to ${bound} log10 units, within the tolerance ${o.toleranceLog10}, and no reversible balanced cycle can deviate by more, so every one is consistent; cycles through a zero rate are irreversible and cycles with unbalanced chemistry unbalanced, listed or not.`;
	else
		scopeText = `${listingText}. ${judgedCycles} distinct cycles and ${conditionsText} of a ${basis.length}-cycle basis were judged; a cycle that is not listed was not judged and may deviate by up to ${bound} log10 units (the sum of |deviation| over the basis conditions), more than the tolerance ${o.toleranceLog10}.${combinationViolations ? ` ${combinationViolations} balanced combination(s) of basis cycles deviate by more than the tolerance, so unlisted cycles may well be violations.` : ''} Raise maxCycles until every cycle is listed to decide them.`;
	if (!enumeration.complete) {
		findings.push({ kind: 'cycle-cap', path: null, message: `${listingText}.` });
		cautions.push('cycle fluxes, cycle form of the entropy production and per-cycle verdicts cover only the listed cycles');
	}
	// the cycle-cap finding already says why the listing stopped
	if (!consistencyComplete)
		findings.push({
			kind: 'consistency-incomplete',
			path: null,
			message: `Consistency is not decided for every cycle: ${scopeText.slice(listingText.length + 2)}`
		});
	for (const c of chemistry.contradictions) {
		const r = scheme.reactions.findIndex((x) => x.id === c.reaction);
		const combination = Object.entries(c.combination)
			.map(([id, n]) => `${Number(n.toPrecision(6))} × "${id}"`)
			.join(' + ');
		findings.push({
			kind: 'reaction-contradiction',
			path: `reactions[${r}].deltaG0kJPerMol`,
			message: `reference reactions contradict each other: "${c.reaction}" has the stoichiometry of ${combination}, but its ΔG°' is ${Number(c.deltaG0kJPerMol.toPrecision(6))} kJ/mol, not ${Number(c.combinedDeltaG0kJPerMol.toPrecision(6))} kJ/mol; cycles are judged with ${Object.keys(c.combination).map((id) => `"${id}"`).join(', ')} (the simplest reactions, whatever the order they are listed in); correct one of the values`
		});
	}
	if (fluxes.computed < enumeration.cycles.length)
		cautions.push(
			`cycle fluxes are given for the first ${fluxes.computed} of ${enumeration.cycles.length} listed cycles (work budget maxFluxWork); the steady state, step fluxes and observables are complete`
		);
	// only cycles count as violations: a combination of cycles may exceed the tolerance while each cycle is within it
	const violation = verdictCounts.violation > 0;
	const correction = o.correction && violation ? proposeCorrection(scheme, table, basis, check.conditions) : null;
	const judgedText = enumeration.complete ? 'of all cycles' : `of the ${judgedCycles} distinct cycles judged, listed and basis`;
	if (violation) {
		const fix = !o.correction
			? ''
			: correction!.feasible
				? '; see correction for the smallest rate changes that restore it'
				: `; ${correction!.reason}`;
		findings.push({
			kind: 'violation',
			path: null,
			message: `${verdictCounts.violation} cycle(s) break thermodynamic consistency (${judgedText})${fix}`
		});
	}
	if (verdictCounts.unbalanced)
		findings.push({
			kind: 'unbalanced',
			path: null,
			message: `${verdictCounts.unbalanced} cycle(s) (${judgedText}) have a net exchange of species that is no combination of the reference reactions; add the missing reaction or fix binds/releases`
		});
	if (correction && !correction.feasible) findings.push({ kind: 'correction-infeasible', path: null, message: correction.reason! });
	const base = observablesOf(scheme, table, ss, chemistry, flows);
	const eta = efficiency({
		forcePN: scheme.forcePN,
		velocityNmPerS: base.velocityNmPerS,
		reactionRatesPerS: chemistry.reactionIds.map((id) => base.reactionRatesPerS[id]),
		reactionDeltaGpNnm: Array.from(chemistry.reactionDeltaGkT, (g) => g * table.kT)
	});
	// complete enumeration brackets the stall forces exactly (stall.ts); otherwise the scan covers ±1000 pN
	const stall = stallSearch(scheme, { cycles: enumeration.complete ? enumeration.cycles : null, maxWork: o.maxStallWork, logP: ss.logP });
	if (stall.message)
		findings.push({
			kind: 'stall-force',
			path: 'observables.stallForcePN',
			message: stall.stallForcePN === null ? `no stall force: ${stall.message}` : stall.message
		});
	const loose = (stall.uncertaintiesPN ?? []).reduce((w, u, i) => Math.max(w, u / Math.max(1, Math.abs(stall.stallForcesPN![i]))), 0);
	if (loose > 1e-6)
		cautions.push(
			`a stall force is known only to ±${Number((loose * 100).toPrecision(2))} % (or pN below 1 pN): V loses digits near it where one-way fluxes dwarf the net flux`
		);
	const observables: AuditObservables = {
		...base,
		efficiency: eta.value,
		efficiencyRegime: eta.regime,
		efficiencyNote: eta.reason,
		stallForcePN: stall.stallForcePN,
		stallForcesPN: stall.stallForcesPN
	};
	return {
		format: AUDIT_FORMAT,
		states: table.stateIds.map((id, i) => ({
			id,
			probability: ss.p[i],
			probabilityLog10: ss.logP[i] === -Infinity ? null : ss.logP[i] / Math.LN10
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
		consistencyComplete,
		consistencyScope: {
			cyclesListed: enumeration.cycles.length,
			listingStoppedBy: enumeration.stoppedBy,
			basisCycles: basis.length,
			basisIrreversible: check.irreversible,
			basisUnbalanced: check.unbalanced,
			conditionsJudged: check.conditions.length,
			balancedCombinations: check.conditions
				.filter((c) => c.basisCycles.length > 1)
				.map((c) => ({ basisCycles: c.basisCycles, coefficients: c.coefficients, deviationLog10: c.deviationLog10, sigmaLog10: c.sigmaLog10, verdict: c.verdict })),
			deviationBoundLog10: check.deviationBoundLog10,
			toleranceLog10: o.toleranceLog10,
			summary: scopeText
		},
		findings,
		cautions,
		correction
	};
}
