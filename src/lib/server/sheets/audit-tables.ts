/**
 * The tables of an audit report, described once and written by every export (xlsx, CSV, PDF):
 * column headers with units, the number format of each numeric column, and one row per cycle, state,
 * step or observable. Values are taken from the escapement.audit/1 object as they are (no rounding);
 * formats only change how they are shown. The optional scheme adds state labels and intrinsic rates.
 */
import type { Audit, Scheme } from '../../engine/index';

export type AuditTableName = 'cycles' | 'states' | 'steps' | 'observables';
export type CellValue = string | number | null;

export interface AuditColumn {
	header: string;
	/** Excel number format for numeric cells; absent for text columns. */
	numFmt?: string;
	width: number;
}

export interface AuditTable {
	name: AuditTableName;
	title: string;
	columns: AuditColumn[];
	rows: CellValue[][];
}

export const SCI = '0.000E+00';
const FIXED4 = '0.0000';
const FIXED3 = '0.000';
const NM = '0.###';

/** Finite numbers as they are (−0 as 0, which is all a spreadsheet can hold); anything else null. */
const finiteOrNull = (x: number | null | undefined): number | null => (typeof x === 'number' && Number.isFinite(x) ? (x === 0 ? 0 : x) : null);

/** "A → B → C → A" */
export function cycleText(states: string[]): string {
	return [...states, states[0]].join(' → ');
}

/** "s1 fwd, s2 back" */
export function cycleStepsText(steps: { id: string; direction: number }[]): string {
	return steps.map((s) => `${s.id} ${s.direction > 0 ? 'fwd' : 'back'}`).join(', ');
}

/** "1 × ATP hydrolysis", "no net chemistry", "unbalanced (no whole combination of the reference reactions)" */
export function netReactionText(net: Record<string, number> | null): string {
	if (net === null) return 'none: unbalanced';
	const parts = Object.entries(net).filter(([, n]) => n !== 0);
	if (parts.length === 0) return 'no net chemistry';
	return parts.map(([id, n]) => `${n} × ${id}`).join(' + ');
}

export function cycleAffinity(audit: Audit, i: number): number | null {
	const fromAudit = (audit as Partial<Audit>).cycleAffinitiesKT?.[i];
	if (fromAudit !== undefined) return finiteOrNull(fromAudit);
	const r = audit.cycles[i].log10RateRatio;
	return r === null ? null : r * Math.LN10;
}

export function cyclesTable(audit: Audit): AuditTable {
	return {
		name: 'cycles',
		title: 'Cycles',
		columns: [
			{ header: 'cycle', width: 7 },
			{ header: 'states', width: 28 },
			{ header: 'steps (direction)', width: 28 },
			{ header: 'verdict', width: 13 },
			{ header: 'log10 Π+/Π−', numFmt: FIXED4, width: 12 },
			{ header: 'expected log10', numFmt: FIXED4, width: 12 },
			{ header: 'deviation (log10)', numFmt: FIXED4, width: 12 },
			{ header: 'uncertainty (log10, 1 s.d.)', numFmt: FIXED4, width: 13 },
			{ header: 'one-way flux J+ (1/s)', numFmt: SCI, width: 13 },
			{ header: 'one-way flux J− (1/s)', numFmt: SCI, width: 13 },
			{ header: 'net flux (1/s)', numFmt: SCI, width: 13 },
			{ header: 'affinity (kBT)', numFmt: FIXED3, width: 11 },
			{ header: 'net reaction', width: 26 },
			{ header: 'displacement (nm)', numFmt: NM, width: 12 }
		],
		rows: audit.cycles.map((c, i) => [
			i + 1,
			cycleText(c.states),
			cycleStepsText(c.steps),
			c.verdict,
			finiteOrNull(c.log10RateRatio),
			finiteOrNull(c.expectedLog10),
			finiteOrNull(c.deviationLog10),
			finiteOrNull(c.sigmaLog10),
			finiteOrNull(c.forwardFlux),
			finiteOrNull(c.backwardFlux),
			finiteOrNull(c.netFlux),
			cycleAffinity(audit, i),
			netReactionText(c.netReaction),
			finiteOrNull(c.displacementNm)
		])
	};
}

export function statesTable(audit: Audit, scheme?: Scheme | null): AuditTable {
	const label = new Map((scheme?.states ?? []).map((s) => [s.id, s.label ?? '']));
	return {
		name: 'states',
		title: 'State probabilities',
		columns: [
			{ header: 'state', width: 12 },
			...(scheme ? [{ header: 'label', width: 32 }] : []),
			{ header: 'probability', numFmt: SCI, width: 14 },
			{ header: 'log10 probability', numFmt: FIXED4, width: 14 }
		],
		rows: audit.states.map((s) => [s.id, ...(scheme ? [label.get(s.id) || null] : []), s.probability, finiteOrNull(s.probabilityLog10)])
	};
}

export function stepsTable(audit: Audit, scheme?: Scheme | null): AuditTable {
	const byId = new Map((scheme?.steps ?? []).map((s) => [s.id, s]));
	const extra = scheme
		? [
				{ header: 'from state', width: 10 },
				{ header: 'to state', width: 10 },
				{ header: 'k forward (1/s or 1/(M·s))', numFmt: SCI, width: 14 },
				{ header: 'k backward (1/s or 1/(M·s))', numFmt: SCI, width: 14 },
				{ header: 'binds', width: 10 },
				{ header: 'releases', width: 10 },
				{ header: 'displacement (nm)', numFmt: NM, width: 12 }
			]
		: [];
	return {
		name: 'steps',
		title: 'Step fluxes',
		columns: [
			{ header: 'step', width: 10 },
			...extra,
			{ header: 'effective rate forward (1/s)', numFmt: SCI, width: 14 },
			{ header: 'effective rate backward (1/s)', numFmt: SCI, width: 14 },
			{ header: 'net flux (1/s)', numFmt: SCI, width: 14 }
		],
		rows: audit.steps.map((s) => {
			const st = byId.get(s.id);
			const more: CellValue[] = scheme
				? [st?.from ?? null, st?.to ?? null, st?.kForward ?? null, st?.kBackward ?? null, st?.binds.join(', ') || null, st?.releases.join(', ') || null, st?.displacementNm ?? null]
				: [];
			return [s.id, ...more, finiteOrNull(s.forwardRate), finiteOrNull(s.backwardRate), finiteOrNull(s.netFlux)];
		})
	};
}

export function observablesTable(audit: Audit): AuditTable {
	const o = audit.observables;
	const rows: CellValue[][] = [
		['mean velocity', finiteOrNull(o.velocityNmPerS), 'nm/s'],
		['effective diffusion coefficient', finiteOrNull(o.diffusionNm2PerS), 'nm²/s'],
		['randomness', finiteOrNull(o.randomness), '(dimensionless)'],
		['entropy production', finiteOrNull(o.entropyProductionKTPerS), 'kB/s'],
		...Object.entries(o.reactionRatesPerS ?? {}).map(([id, r]): CellValue[] => [`turnover: ${id}`, finiteOrNull(r), '1/s']),
		['efficiency', finiteOrNull(o.efficiency), o.efficiencyRegime ? `(dimensionless, ${o.efficiencyRegime} regime)` : '(dimensionless)'],
		// audits stored before the stall force was part of the audit have no such key
		...(o.stallForcesPN === undefined
			? []
			: (o.stallForcesPN?.length ? o.stallForcesPN : [null]).map((f, i, all): CellValue[] => [
					all.length > 1 ? `stall force ${i + 1} of ${all.length}` : 'stall force',
					f === null ? null : finiteOrNull(f),
					'pN'
				]))
	];
	return {
		name: 'observables',
		title: 'Observables',
		columns: [
			{ header: 'quantity', width: 34 },
			{ header: 'value', numFmt: '0.0000E+00', width: 16 },
			{ header: 'unit', width: 16 }
		],
		rows
	};
}

export function auditTable(audit: Audit, name: AuditTableName, scheme?: Scheme | null): AuditTable {
	switch (name) {
		case 'cycles':
			return cyclesTable(audit);
		case 'states':
			return statesTable(audit, scheme);
		case 'steps':
			return stepsTable(audit, scheme);
		case 'observables':
			return observablesTable(audit);
	}
}

export interface VerdictCounts {
	consistent: number;
	violation: number;
	irreversible: number;
	unbalanced: number;
}

export function verdictCounts(audit: Audit): VerdictCounts {
	const given = (audit as Partial<Audit>).verdictCounts;
	if (given) return { consistent: given.consistent ?? 0, violation: given.violation ?? 0, irreversible: given.irreversible ?? 0, unbalanced: given.unbalanced ?? 0 };
	const out = { consistent: 0, violation: 0, irreversible: 0, unbalanced: 0 };
	for (const c of audit.cycles) out[c.verdict as keyof VerdictCounts]++;
	return out;
}

/**
 * Whether the verdicts cover every cycle: the audit's own `consistencyComplete`; audits from before it was
 * recorded only know whether every cycle was listed.
 */
export function consistencyDecided(audit: Audit): boolean {
	const given = (audit as Partial<Audit>).consistencyComplete;
	return typeof given === 'boolean' ? given : audit.cyclesComplete;
}

/** What the verdicts were judged on, in a few words. */
function judgedOn(audit: Audit): string {
	if (audit.cyclesComplete) return 'every cycle';
	const scope = (audit as Partial<Audit>).consistencyScope;
	if (consistencyDecided(audit) && scope)
		return `the listed cycles and a cycle basis whose deviations sum to ${Number(scope.deviationBoundLog10.toPrecision(3))}, within the tolerance, which bounds every cycle`;
	return 'the listed cycles and a cycle basis, not every cycle';
}

/** One sentence a reviewer reads first. */
export function overallVerdict(audit: Audit): string {
	const v = verdictCounts(audit);
	const judged = judgedOn(audit);
	if (v.violation > 0) return `NOT CONSISTENT: ${v.violation} cycle(s) break thermodynamic consistency (judged on ${judged}).`;
	if (v.unbalanced > 0) return `INCOMPLETE: ${v.unbalanced} cycle(s) exchange species that no combination of the reference reactions accounts for.`;
	if (!consistencyDecided(audit)) {
		const scope = (audit as Partial<Audit>).consistencyScope;
		const bound = scope ? ` Cycles that were not listed may deviate by up to ${Number(scope.deviationBoundLog10.toPrecision(3))} log10 units.` : '';
		return `NOT DECIDED FOR EVERY CYCLE: no judged cycle breaks thermodynamic consistency (judged on ${judged}).${bound}`;
	}
	if (v.irreversible > 0) return `IRREVERSIBLE STEPS: ${v.irreversible} cycle(s) run through a zero rate and cannot be judged; the others are consistent.`;
	return `CONSISTENT: no cycle breaks thermodynamic consistency (judged on ${judged}).`;
}

export const STANDING_CAUTION =
	'An audit checks the scheme as entered (its rate constants, conditions and reference reactions), not the biology behind it: a consistent scheme can still be a wrong model of the motor.';

export function cautionsOf(audit: Audit): string[] {
	const extra = ((audit as Partial<Audit>).cautions ?? []).map((c) => (typeof c === 'string' ? c : String((c as { message?: string }).message ?? c)));
	return [STANDING_CAUTION, ...extra];
}

export function findingsOf(audit: Audit): string[] {
	return ((audit as Partial<Audit>).findings ?? []).map((f) => (typeof f === 'string' ? f : f.message));
}

export interface Provenance {
	sourceFileName: string | null;
	sourceSha256: string | null;
	engineVersion: string;
	createdAt: string;
	createdBy: string;
	auditSha256?: string;
}

export function provenanceRows(p: Provenance): [string, string][] {
	return [
		['source file', p.sourceFileName ?? 'none (entered in the app)'],
		['source file SHA-256', p.sourceSha256 ?? 'not recorded'],
		['audit SHA-256', p.auditSha256 ?? 'not recorded'],
		['engine version', p.engineVersion],
		['audit run at', p.createdAt],
		['audit run by', p.createdBy]
	];
}
