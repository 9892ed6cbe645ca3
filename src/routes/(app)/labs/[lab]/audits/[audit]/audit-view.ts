/**
 * Pure helpers of the audit page: how a cycle reads (path, net reaction), the cycle most out of line with its
 * uncertainty, and sorting and filtering of the cycles table. Kept out of the components so they can be tested.
 */
import type { AuditCycle, Verdict } from '$lib/engine';

export interface CycleRow {
	/** position in audit.results.cycles (stable across sorting) */
	index: number;
	cycle: AuditCycle;
	affinityKT: number | null;
	/** |deviation| / σ, null when either is missing or σ is 0 */
	zScore: number | null;
}

export const CYCLE_SORTS = ['z', 'deviation', 'netFlux', 'length'] as const;
export type CycleSort = (typeof CYCLE_SORTS)[number];

export const CYCLE_SORT_LABELS: Record<CycleSort, string> = {
	z: '|deviation| / σ',
	deviation: 'deviation (log10)',
	netFlux: 'net flux',
	length: 'length'
};

export function zScore(cycle: Pick<AuditCycle, 'deviationLog10' | 'sigmaLog10'>): number | null {
	const { deviationLog10: d, sigmaLog10: s } = cycle;
	if (d === null || s === null || !(s > 0)) return null;
	return Math.abs(d) / s;
}

export function cycleRows(cycles: AuditCycle[], affinitiesKT: (number | null)[]): CycleRow[] {
	return cycles.map((cycle, index) => ({ index, cycle, affinityKT: affinitiesKT[index] ?? null, zScore: zScore(cycle) }));
}

function sortKey(row: CycleRow, sort: CycleSort): number | null {
	switch (sort) {
		case 'z':
			return row.zScore;
		case 'deviation':
			return row.cycle.deviationLog10;
		case 'netFlux':
			return row.cycle.netFlux;
		case 'length':
			return row.cycle.steps.length;
	}
}

/**
 * Rows with the verdict (or all), sorted by a key; missing values (irreversible cycles have no deviation) go last
 * in either direction; ties keep the engine's order.
 */
export function sortAndFilterCycles(rows: CycleRow[], sort: CycleSort, descending: boolean, verdict: Verdict | 'all'): CycleRow[] {
	const kept = verdict === 'all' ? rows.slice() : rows.filter((r) => r.cycle.verdict === verdict);
	return kept.sort((a, b) => {
		const ka = sortKey(a, sort);
		const kb = sortKey(b, sort);
		if (ka === null && kb === null) return a.index - b.index;
		if (ka === null) return 1;
		if (kb === null) return -1;
		const order = descending ? kb - ka : ka - kb;
		return order !== 0 ? order : a.index - b.index;
	});
}

/**
 * The listed cycle whose deviation is largest against its own uncertainty; when no cycle has an uncertainty, the one
 * with the largest |deviation| (its zScore stays null); null when no cycle has a deviation at all.
 */
export function worstCycle(rows: CycleRow[]): CycleRow | null {
	let worst: CycleRow | null = null;
	for (const row of rows) if (row.zScore !== null && (worst === null || row.zScore > (worst.zScore ?? -1))) worst = row;
	if (worst) return worst;
	for (const row of rows) {
		const d = row.cycle.deviationLog10;
		if (d !== null && (worst === null || Math.abs(d) > Math.abs(worst.cycle.deviationLog10 ?? 0))) worst = row;
	}
	return worst;
}

/** "E → T → S → E": the states of a cycle in order, closed. */
export function cyclePath(states: string[]): string {
	return states.length ? [...states, states[0]].join(' → ') : '';
}

/** "ATP on (+), futile release (−)": the steps of a cycle with the direction they are taken. */
export function cycleStepsText(steps: AuditCycle['steps']): string {
	return steps.map((s) => `${s.id} (${s.direction === 1 ? '+' : '−'})`).join(', ');
}

/**
 * "ATP hydrolysis", "2 × ATP hydrolysis", "Pi exchange (reverse)"; "none" for a cycle that exchanges nothing,
 * "—" when the exchange is no combination of the reference reactions.
 */
export function netReactionText(netReaction: Record<string, number> | null): string {
	if (netReaction === null) return '—';
	const parts = Object.entries(netReaction)
		.filter(([, n]) => n !== 0)
		.map(([id, n]) => {
			const times = Math.abs(Number(n.toFixed(3)));
			return `${times === 1 ? '' : `${times} × `}${id}${n < 0 ? ' (reverse)' : ''}`;
		});
	return parts.length ? parts.join(', ') : 'none';
}

/** Page of a list: rows `from`–`to` (1-based, inclusive) and the number of pages. */
export function pageOf<T>(rows: T[], page: number, size: number): { rows: T[]; page: number; pages: number; from: number; to: number } {
	const pages = Math.max(1, Math.ceil(rows.length / size));
	const p = Math.min(Math.max(1, Math.floor(page)), pages);
	const start = (p - 1) * size;
	const slice = rows.slice(start, start + size);
	return { rows: slice, page: p, pages, from: slice.length ? start + 1 : 0, to: start + slice.length };
}
