/**
 * The editable form of a scheme: every number as the text the person typed, species lists and reaction
 * equations as text. `documentOf` turns a draft back into a scheme document for the engine's parseScheme, which
 * runs in the browser as you type; values that are not numbers are passed through as text so that parseScheme
 * reports them at their JSON path. Equations it cannot read are reported here, at the same kind of path.
 */
import { formatEquation, parseScheme, type Scheme, type SchemeError } from '$lib/engine';

export interface DraftState {
	id: string;
	label: string;
}
export interface DraftStep {
	id: string;
	from: string;
	to: string;
	kForward: string;
	kBackward: string;
	binds: string;
	releases: string;
	displacementNm: string;
	loadFraction: string;
	relUncertaintyForward: string;
	relUncertaintyBackward: string;
}
export interface DraftReaction {
	id: string;
	equation: string;
	deltaG0kJPerMol: string;
}
export interface DraftSpecies {
	species: string;
	concentrationM: string;
}
export interface SchemeDraft {
	name: string;
	temperatureK: string;
	forcePN: string;
	stepSizeNm: string;
	concentrations: DraftSpecies[];
	reactions: DraftReaction[];
	states: DraftState[];
	steps: DraftStep[];
}

const numberText = (x: number | null | undefined): string => (x === null || x === undefined ? '' : String(x));

/** Reads "ATP → ADP + Pi" (also "->" or "="); returns the stoichiometry or what is wrong with the text. */
export function parseEquation(text: string): { ok: true; stoichiometry: Record<string, number> } | { ok: false; message: string } {
	const sides = text.split(/→|->|=/);
	if (sides.length !== 2)
		return { ok: false, message: 'write the reaction as "ATP → ADP + Pi" (one arrow, → or ->, species joined by +)' };
	const stoichiometry: Record<string, number> = {};
	for (const [i, side] of sides.entries()) {
		const sign = i === 0 ? -1 : 1;
		for (const term of side.split('+').map((t) => t.trim()).filter(Boolean)) {
			const m = /^(\d+(?:\.\d+)?)?\s*([A-Za-z][\w·.-]*)$/.exec(term);
			if (!m) return { ok: false, message: `cannot read "${term}": write a species name, optionally preceded by a count ("2 Pi")` };
			const n = m[1] ? Number(m[1]) : 1;
			stoichiometry[m[2]] = (stoichiometry[m[2]] ?? 0) + sign * n;
		}
	}
	for (const [species, n] of Object.entries(stoichiometry)) if (n === 0) delete stoichiometry[species];
	if (Object.keys(stoichiometry).length === 0) return { ok: false, message: 'the reaction changes no species; write e.g. "ATP → ADP + Pi"' };
	return { ok: true, stoichiometry };
}

export function draftOf(scheme: Scheme): SchemeDraft {
	return {
		name: scheme.name ?? '',
		temperatureK: numberText(scheme.temperatureK),
		forcePN: numberText(scheme.forcePN),
		stepSizeNm: numberText(scheme.stepSizeNm),
		concentrations: Object.entries(scheme.concentrationsM).map(([species, c]) => ({ species, concentrationM: numberText(c) })),
		reactions: scheme.reactions.map((r) => ({ id: r.id, equation: formatEquation(r.stoichiometry), deltaG0kJPerMol: numberText(r.deltaG0kJPerMol) })),
		states: scheme.states.map((s) => ({ id: s.id, label: s.label ?? '' })),
		steps: scheme.steps.map((s) => ({
			id: s.id,
			from: s.from,
			to: s.to,
			kForward: numberText(s.kForward),
			kBackward: numberText(s.kBackward),
			binds: s.binds.join(', '),
			releases: s.releases.join(', '),
			displacementNm: numberText(s.displacementNm),
			loadFraction: numberText(s.loadFraction),
			relUncertaintyForward: numberText(s.relUncertaintyForward),
			relUncertaintyBackward: numberText(s.relUncertaintyBackward)
		}))
	};
}

/** A step row with both rates 1 s⁻¹ and every optional field left to the engine's default. */
function blankStep(id: string, from: string, to: string): DraftStep {
	return {
		id,
		from,
		to,
		kForward: '1',
		kBackward: '1',
		binds: '',
		releases: '',
		displacementNm: '',
		loadFraction: '',
		relUncertaintyForward: '',
		relUncertaintyBackward: ''
	};
}

/** A blank step row joining the first two states (or nothing), with an unused id. */
export function newStep(draft: SchemeDraft): DraftStep {
	const ids = new Set(draft.steps.map((s) => s.id));
	let n = draft.steps.length + 1;
	while (ids.has(`s${n}`)) n++;
	return blankStep(`s${n}`, draft.states[0]?.id ?? '', draft.states[1]?.id ?? '');
}

export function newState(draft: SchemeDraft): DraftState {
	const ids = new Set(draft.states.map((s) => s.id));
	let n = draft.states.length;
	const letter = (i: number) => (i < 26 ? String.fromCharCode(65 + i) : `S${i + 1}`);
	while (ids.has(letter(n))) n++;
	return { id: letter(n), label: '' };
}

/** The smallest scheme that passes validation: two states and one reversible step (consistent, no chemistry). */
export function startingDraft(name = ''): SchemeDraft {
	return {
		name,
		temperatureK: '298.15',
		forcePN: '0',
		stepSizeNm: '',
		concentrations: [],
		reactions: [],
		states: [
			{ id: 'A', label: '' },
			{ id: 'B', label: '' }
		],
		steps: [blankStep('s1', 'A', 'B')]
	};
}

/** Text → number when it reads as one; otherwise the trimmed text itself (parseScheme then says what is wrong). */
function value(text: string): number | string {
	const t = text.trim().replace(/\s+/g, '').replace(/[−–]/g, '-');
	if (t === '') return t;
	const n = Number(t);
	return Number.isFinite(n) ? n : text.trim();
}
/** Optional fields: empty text leaves the field out so the engine's default applies. */
function optional(text: string): number | string | undefined {
	return text.trim() === '' ? undefined : value(text);
}
function list(text: string): string[] {
	return text
		.split(/[,;]/)
		.map((s) => s.trim())
		.filter(Boolean);
}

export interface DraftDocument {
	document: Record<string, unknown>;
	/** Problems found while reading the text itself (equations), with their JSON path. */
	errors: SchemeError[];
}

export function documentOf(draft: SchemeDraft): DraftDocument {
	const errors: SchemeError[] = [];
	const concentrationsM: Record<string, number | string> = {};
	draft.concentrations.forEach((c, i) => {
		const species = c.species.trim();
		if (!species) {
			if (c.concentrationM.trim()) errors.push({ path: `concentrations[${i}].species`, message: 'give the species a name (e.g. ATP)' });
			return;
		}
		if (species in concentrationsM) errors.push({ path: `concentrations[${i}].species`, message: `"${species}" is listed twice; keep one row per species` });
		concentrationsM[species] = value(c.concentrationM);
	});
	const reactions = draft.reactions.map((r, i) => {
		const parsed = parseEquation(r.equation);
		if (!parsed.ok) errors.push({ path: `reactions[${i}].stoichiometry`, message: parsed.message });
		return { id: r.id.trim(), stoichiometry: parsed.ok ? parsed.stoichiometry : {}, deltaG0kJPerMol: value(r.deltaG0kJPerMol) };
	});
	const document: Record<string, unknown> = {
		format: 'escapement.scheme/1',
		name: draft.name.trim(),
		temperatureK: optional(draft.temperatureK),
		forcePN: optional(draft.forcePN),
		stepSizeNm: draft.stepSizeNm.trim() === '' ? null : value(draft.stepSizeNm),
		concentrationsM,
		reactions,
		states: draft.states.map((s) => (s.label.trim() ? { id: s.id.trim(), label: s.label.trim() } : { id: s.id.trim() })),
		steps: draft.steps.map((s) => {
			const step: Record<string, unknown> = {
				id: s.id.trim(),
				from: s.from,
				to: s.to,
				kForward: value(s.kForward),
				kBackward: value(s.kBackward),
				binds: list(s.binds),
				releases: list(s.releases)
			};
			for (const key of ['displacementNm', 'loadFraction', 'relUncertaintyForward', 'relUncertaintyBackward'] as const) {
				const v = optional(s[key]);
				if (v !== undefined) step[key] = v;
			}
			return step;
		})
	};
	for (const key of ['temperatureK', 'forcePN'] as const) if (document[key] === undefined) delete document[key];
	return { document, errors };
}

export type DraftCheck = { ok: true; scheme: Scheme; errors: [] } | { ok: false; scheme: null; errors: SchemeError[] };

/** documentOf + parseScheme: every problem of the draft with its JSON path, or the validated scheme. */
export function checkDraft(draft: SchemeDraft): DraftCheck {
	const { document, errors } = documentOf(draft);
	const parsed = parseScheme(document);
	const all = [...errors, ...(parsed.ok ? [] : parsed.errors)];
	if (parsed.ok && errors.length === 0) return { ok: true, scheme: parsed.scheme, errors: [] };
	return { ok: false, scheme: null, errors: all };
}

/** Errors that belong to one cell: its exact path or anything below it (`steps[2].binds[0]` for `steps[2].binds`). */
export function errorsAt(errors: SchemeError[], path: string): SchemeError[] {
	return errors.filter((e) => e.path === path || e.path.startsWith(`${path}.`) || e.path.startsWith(`${path}[`));
}

/** The JSON path of a concentration in the document (matches the engine's formatPath). */
export function concentrationPath(species: string): string {
	return /^[A-Za-z_$][\w$]*$/.test(species) ? `concentrationsM.${species}` : `concentrationsM[${JSON.stringify(species)}]`;
}
