/**
 * The one-row-per-direction layout (from, to, rate): pairing rows into reversible steps.
 *
 * Rows with the same step name are the two directions of one step; unnamed rows are paired by their
 * two states (A → B with B → A). The first row of a pair sets the step's forward direction. A missing
 * reverse row means a zero backward rate and is reported as a warning. More than one unnamed row for
 * the same direction is ambiguous (parallel steps) and is an error asking for step names.
 * Cost: O(rows). Output order: the order of each pair's first row.
 */
import { IssueList, type CellRef } from './types';

export interface DirectionRow {
	row: number;
	id: string | null;
	from: string;
	to: string;
	/** Location of the row's from-state cell, for row-level messages. */
	at: CellRef;
}

export interface DirectionPair<R extends DirectionRow> {
	forward: R;
	backward: R | null;
}

export function pairDirections<R extends DirectionRow>(rows: R[], issues: IssueList): DirectionPair<R>[] {
	const pairs: { first: number; pair: DirectionPair<R> }[] = [];
	const named = new Map<string, R[]>();
	const unnamed = new Map<string, R[]>();
	const order: { kind: 'named' | 'unnamed'; key: string; first: number }[] = [];
	for (const r of rows) {
		const named1 = r.id !== null && r.id !== '';
		const map = named1 ? named : unnamed;
		const key = named1 ? r.id! : [r.from, r.to].sort().join('\u0000');
		if (!map.has(key)) {
			map.set(key, []);
			order.push({ kind: named1 ? 'named' : 'unnamed', key, first: r.row });
		}
		map.get(key)!.push(r);
	}
	for (const { kind, key, first } of order) {
		const group = (kind === 'named' ? named : unnamed).get(key)!;
		const head = group[0];
		const forwardRows = group.filter((r) => r.from === head.from && r.to === head.to);
		const backwardRows = group.filter((r) => r.from === head.to && r.to === head.from);
		const stray = group.filter((r) => !forwardRows.includes(r) && !backwardRows.includes(r));
		for (const r of stray) {
			issues.error(r.at, `Row ${r.row} is named "${r.id}" like row ${head.row}, but joins ${r.from} → ${r.to} instead of ${head.from} ↔ ${head.to}. The two rows of a step must join the same two states in opposite directions; rename one of them.`);
		}
		for (const extra of [...forwardRows.slice(1), ...backwardRows.slice(1)]) {
			issues.error(
				extra.at,
				kind === 'named'
					? `Step "${key}" has more than one row for ${extra.from} → ${extra.to} (also row ${(extra.from === head.from ? forwardRows : backwardRows)[0].row}). Give each parallel step its own name.`
					: `More than one row goes from ${extra.from} to ${extra.to} (also row ${(extra.from === head.from ? forwardRows : backwardRows)[0].row}). When two steps join the same states, fill in the step column so each direction can be paired with its reverse.`
			);
		}
		const backward = backwardRows[0] ?? null;
		if (!backward) {
			issues.warn(head.at, `No row for ${head.to} → ${head.from}${kind === 'named' ? ` (step "${key}")` : ''}: its rate is taken as zero, so the step cannot go back and every cycle through it is irreversible. Add that row if the step can reverse.`);
		}
		pairs.push({ first, pair: { forward: head, backward } });
	}
	pairs.sort((a, b) => a.first - b.first);
	return pairs.map((p) => p.pair);
}
