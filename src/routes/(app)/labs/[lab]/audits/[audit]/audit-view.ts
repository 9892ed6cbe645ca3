/**
 * Pure helpers of the audit page: how a cycle reads (path, steps, net reaction). Kept out of the components so they
 * can be tested; sorting, filtering and paging of the cycles table are shared with the API in $lib/audit-cycles.
 */
import type { AuditCycle } from '$lib/engine';

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
