/**
 * The cycles table of an audit: rows (a cycle with its affinity and |deviation|/σ), sorting, filtering by verdict and
 * paging. Pure, so that the audit page (small audits, in the browser) and the cycles API route (large audits, on the
 * server) list cycles the same way, and so that the page can send a short summary instead of every cycle.
 * Cost: O(c log c) for c listed cycles per sorted page.
 */
import type { Audit, AuditCycle, Verdict } from './engine';

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

/** Verdicts in the order the table's filter shows them, worst first. */
export const CYCLE_VERDICTS: readonly Verdict[] = ['violation', 'irreversible', 'unbalanced', 'consistent'];

/** Rows per page of the audit page's cycles table. */
export const CYCLE_PAGE_SIZE = 50;
/** Largest page the cycles route answers. */
export const CYCLE_PAGE_MAX = 200;
/** Audits with at most this many listed cycles send them all with the page; larger ones are paged by the route. */
export const CYCLE_INLINE_MAX = 200;

/** An audit without its per-cycle lists (getAuditSummary): what the audit page receives whatever the number of cycles. */
export type AuditSummary = Omit<Audit, 'cycles' | 'cycleAffinitiesKT'>;

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

/** How many listed cycles have each verdict (every verdict present, 0 when none). */
export function cycleVerdictCounts(rows: CycleRow[]): Record<Verdict, number> {
	const counts = Object.fromEntries(CYCLE_VERDICTS.map((v) => [v, 0])) as Record<Verdict, number>;
	for (const row of rows) counts[row.cycle.verdict]++;
	return counts;
}

export interface CycleQuery {
	verdict: Verdict | 'all';
	sort: CycleSort;
	descending: boolean;
	/** 1-based; a page past the last one is empty */
	page: number;
	pageSize: number;
	/** index of a cycle to bring into view: when it passes the filter, the page that holds it replaces `page` */
	cycle?: number | null;
}

export interface CyclePage {
	/** cycles that pass the verdict filter */
	total: number;
	page: number;
	pageSize: number;
	pages: number;
	/** listed cycles of each verdict, before filtering (their sum is the number of listed cycles) */
	counts: Record<Verdict, number>;
	rows: CycleRow[];
}

/** How the table opens: every cycle, the most out of line with its uncertainty first. */
export const CYCLE_SORT_DEFAULT: Pick<CycleQuery, 'verdict' | 'sort' | 'descending'> = { verdict: 'all', sort: 'z', descending: true };

/** One page of the cycles table: filtered, sorted, with the verdict counts the filter buttons show. */
export function cyclePage(rows: CycleRow[], query: CycleQuery): CyclePage {
	const shown = sortAndFilterCycles(rows, query.sort, query.descending, query.verdict);
	const size = Math.max(1, Math.floor(query.pageSize));
	let page = Math.max(1, Math.floor(query.page));
	if (query.cycle !== undefined && query.cycle !== null) {
		const position = shown.findIndex((r) => r.index === query.cycle);
		if (position >= 0) page = Math.floor(position / size) + 1;
	}
	return {
		total: shown.length,
		page,
		pageSize: size,
		pages: Math.max(1, Math.ceil(shown.length / size)),
		counts: cycleVerdictCounts(rows),
		rows: shown.slice((page - 1) * size, page * size)
	};
}

/**
 * Few violating cycles that together pass through every step of every violating cycle: what the scheme diagram needs
 * to mark steps on violating cycles, without sending all of them. At most one cycle per step.
 */
export function violationCover(cycles: AuditCycle[]): AuditCycle[] {
	const marked = new Set<string>();
	const cover: AuditCycle[] = [];
	for (const cycle of cycles) {
		if (cycle.verdict !== 'violation' || cycle.steps.every((s) => marked.has(s.id))) continue;
		cycle.steps.forEach((s) => marked.add(s.id));
		cover.push(cycle);
	}
	return cover;
}

/** Cycles the scheme page lists beside its live results. */
export const NOTABLE_CYCLES = 12;
const NOTABLE_ORDER: readonly Verdict[] = ['violation', 'unbalanced', 'irreversible', 'consistent'];

/**
 * The `count` most notable cycles, worst verdict first, then by |net flux|, with their positions in `cycles`. The
 * scheme page's load sends only these (an audit lists up to 20,000 cycles), and the page lists a live preview the same way.
 */
export function notableCycles(cycles: AuditCycle[], count = NOTABLE_CYCLES): { cycle: AuditCycle; index: number }[] {
	const rank = (v: Verdict) => NOTABLE_ORDER.indexOf(v);
	return cycles
		.map((cycle, index) => ({ cycle, index }))
		.sort((a, b) => rank(a.cycle.verdict) - rank(b.cycle.verdict) || Math.abs(b.cycle.netFlux ?? 0) - Math.abs(a.cycle.netFlux ?? 0) || a.index - b.index)
		.slice(0, count);
}
