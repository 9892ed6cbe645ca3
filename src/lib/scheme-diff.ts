/**
 * What changed between two revisions of a scheme: states and steps added, removed or changed (field by field),
 * conditions and reference reactions. Pure; used by the revision comparison page and the API.
 */
import type { Scheme } from './engine';

export interface FieldChange {
	field: string;
	before: unknown;
	after: unknown;
}
export interface ItemChange {
	id: string;
	kind: 'added' | 'removed' | 'changed';
	changes: FieldChange[];
}
export interface SchemeDiff {
	conditions: FieldChange[];
	states: ItemChange[];
	steps: ItemChange[];
	reactions: ItemChange[];
	unchanged: boolean;
}

function same(a: unknown, b: unknown): boolean {
	return JSON.stringify(a) === JSON.stringify(b);
}

function fieldChanges(before: Record<string, unknown>, after: Record<string, unknown>): FieldChange[] {
	const keys = [...new Set([...Object.keys(before), ...Object.keys(after)])];
	return keys.filter((k) => !same(before[k], after[k])).map((field) => ({ field, before: before[field] ?? null, after: after[field] ?? null }));
}

function itemChanges<T extends { id: string }>(before: T[], after: T[]): ItemChange[] {
	const old = new Map(before.map((x) => [x.id, x]));
	const now = new Map(after.map((x) => [x.id, x]));
	const out: ItemChange[] = [];
	for (const [id, item] of old) {
		const next = now.get(id);
		if (!next) out.push({ id, kind: 'removed', changes: [] });
		else {
			const changes = fieldChanges(item as Record<string, unknown>, next as Record<string, unknown>);
			if (changes.length) out.push({ id, kind: 'changed', changes });
		}
	}
	for (const [id, item] of now) {
		if (!old.has(id)) out.push({ id, kind: 'added', changes: fieldChanges({}, item as Record<string, unknown>) });
	}
	return out;
}

export function diffSchemes(before: Scheme, after: Scheme): SchemeDiff {
	const conditionsOf = (s: Scheme) => ({
		name: s.name,
		temperatureK: s.temperatureK,
		forcePN: s.forcePN,
		stepSizeNm: s.stepSizeNm,
		...Object.fromEntries(Object.entries(s.concentrationsM).map(([k, v]) => [`[${k}] (M)`, v]))
	});
	const diff = {
		conditions: fieldChanges(conditionsOf(before), conditionsOf(after)),
		states: itemChanges(before.states, after.states),
		steps: itemChanges(before.steps, after.steps),
		reactions: itemChanges(before.reactions, after.reactions)
	};
	return { ...diff, unchanged: Object.values(diff).every((list) => list.length === 0) };
}
