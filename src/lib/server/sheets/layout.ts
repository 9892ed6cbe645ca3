/**
 * The layout of Escapement's rate-table workbook: sheet names, column headers (our own, in the trade's
 * words, units in parentheses) and the aliases the reader also accepts. The template writer and both
 * readers use this one description, so what the template says is what the import reads.
 */

import { SCHEME_LIMITS } from '../../engine/scheme';

export const SHEETS = {
	readMe: 'Read me',
	conditions: 'Conditions',
	states: 'States',
	steps: 'Steps',
	reactions: 'Reactions'
} as const;

/** Sheets of the filled-in example carry this prefix and are never imported. */
export const EXAMPLE_PREFIX = 'Example ';

export const LIMITS = {
	fileBytes: 10 * 1024 * 1024,
	/** the scheme's own limit (SCHEME_LIMITS), so an imported table is never refused later by the editor */
	steps: SCHEME_LIMITS.steps,
	/** One-row-per-direction tables have up to two rows per step. */
	rowsPerSheet: 2 * SCHEME_LIMITS.steps + 100,
	cellsPerWorkbook: 400_000,
	unzippedBytes: 64 * 1024 * 1024,
	zipEntries: 500,
	/** Above this ratio of unzipped to zipped size an entry is taken for a bomb. */
	compressionRatio: 200
} as const;

export interface ColumnSpec {
	key: string;
	header: string;
	aliases: string[];
	required?: boolean;
	width: number;
	/** Shown as a note on the header cell of the template. */
	note: string;
}

export const STEP_COLUMNS: ColumnSpec[] = [
	{ key: 'id', header: 'step', aliases: ['step id', 'step name', 'id', 'name'], width: 10, note: 'A short name for the step, unique in the scheme. Leave empty to number the steps s1, s2, …' },
	{ key: 'from', header: 'from state', aliases: ['from'], required: true, width: 12, note: 'The state the step leaves in its forward direction.' },
	{ key: 'to', header: 'to state', aliases: ['to'], required: true, width: 12, note: 'The state the step reaches in its forward direction.' },
	{ key: 'kForward', header: 'k forward (1/s or 1/(M·s))', aliases: ['forward rate', 'forward rate constant', 'k fwd', 'kf'], required: true, width: 22, note: 'Rate constant from → to. Per second, and per M of each species bound. Write 1/(µM·s) in the header to give binding rates per µM.' },
	{ key: 'kBackward', header: 'k backward (1/s or 1/(M·s))', aliases: ['backward rate', 'backward rate constant', 'k bwd', 'kb', 'k reverse', 'reverse rate'], required: true, width: 22, note: 'Rate constant to → from. Per second, and per M of each species released forward. Type 0 if the step cannot go back.' },
	{ key: 'binds', header: 'binds', aliases: ['binds forward', 'species bound', 'bound'], width: 12, note: 'Species taken from solution going forward, separated by commas (e.g. ATP). Each needs a concentration on the Conditions sheet.' },
	{ key: 'releases', header: 'releases', aliases: ['releases forward', 'species released', 'released'], width: 12, note: 'Species returned to solution going forward, separated by commas (e.g. ADP, Pi).' },
	{ key: 'displacementNm', header: 'displacement (nm)', aliases: ['step displacement', 'distance', 'd'], width: 16, note: 'Distance moved along the track going forward, in nm (or write Å in the header).' },
	{ key: 'loadFraction', header: 'load fraction', aliases: ['load distribution', 'force fraction'], width: 13, note: 'Share of the load work on the forward rate, 0 to 1 (empty: 0.5).' },
	{ key: 'relUncertaintyForward', header: 'rel. uncertainty forward', aliases: ['relative uncertainty forward', 'uncertainty forward'], width: 14, note: 'Relative standard uncertainty of k forward, e.g. 0.1 or 10%.' },
	{ key: 'relUncertaintyBackward', header: 'rel. uncertainty backward', aliases: ['relative uncertainty backward', 'uncertainty backward'], width: 14, note: 'Relative standard uncertainty of k backward.' },
	{ key: 'note', header: 'note', aliases: ['notes', 'comment', 'source', 'reference'], width: 30, note: 'Free text, not imported.' }
];

/** The alternative layout: one row per direction, paired into reversible steps on import. */
export const DIRECTION_COLUMNS: ColumnSpec[] = [
	{ key: 'id', header: 'step', aliases: ['step id', 'step name', 'id', 'name'], width: 10, note: 'Optional. Both directions of a step share its name; needed when two steps join the same two states.' },
	{ key: 'from', header: 'from state', aliases: ['from'], required: true, width: 12, note: 'State before the transition.' },
	{ key: 'to', header: 'to state', aliases: ['to'], required: true, width: 12, note: 'State after the transition.' },
	{ key: 'rate', header: 'rate (1/s or 1/(M·s))', aliases: ['k', 'rate constant'], required: true, width: 22, note: 'Rate constant of this transition, per second and per M of each species it binds.' },
	{ key: 'binds', header: 'binds', aliases: ['species bound', 'bound'], width: 12, note: 'Species taken from solution in this transition.' },
	{ key: 'releases', header: 'releases', aliases: ['species released', 'released'], width: 12, note: 'Species returned to solution in this transition.' },
	{ key: 'displacementNm', header: 'displacement (nm)', aliases: ['step displacement', 'distance', 'd'], width: 16, note: 'Distance moved in this transition (the reverse row, if filled, must be its negative).' },
	{ key: 'loadFraction', header: 'load fraction', aliases: ['load distribution', 'force fraction'], width: 13, note: 'Share of the load work on this rate; the two directions of a step add up to 1.' },
	{ key: 'relUncertainty', header: 'rel. uncertainty', aliases: ['relative uncertainty', 'uncertainty'], width: 14, note: 'Relative standard uncertainty of this rate.' },
	{ key: 'note', header: 'note', aliases: ['notes', 'comment', 'source', 'reference'], width: 30, note: 'Free text, not imported.' }
];

export const STATE_COLUMNS: ColumnSpec[] = [
	{ key: 'id', header: 'state', aliases: ['state id', 'id', 'name'], required: true, width: 12, note: 'Short unique name of the state, used in the Steps sheet.' },
	{ key: 'label', header: 'label', aliases: ['description', 'meaning'], width: 40, note: 'What the state is, in words (optional).' }
];

export const REACTION_COLUMNS: ColumnSpec[] = [
	{ key: 'id', header: 'reaction', aliases: ['reaction name', 'name', 'id'], required: true, width: 18, note: 'Name of a reference reaction, e.g. ATP hydrolysis.' },
	{ key: 'equation', header: 'equation', aliases: ['stoichiometry', 'reaction equation'], required: true, width: 24, note: 'Written with → and +, e.g. ATP → ADP + Pi. Leave out water and protons.' },
	{ key: 'deltaG', header: "ΔG°' (kJ/mol)", aliases: ['δg', 'δg0', 'dg', 'dg0', 'delta g', 'delta g0', 'standard free energy', 'standard free energy change'], required: true, width: 16, note: "Standard free-energy change at the scheme's temperature, in kJ/mol (or write kcal/mol or kBT in the header)." },
	{ key: 'unit', header: 'unit', aliases: [], width: 10, note: 'Optional: the unit of this row, when it differs from the header.' }
];

export const CONDITION_COLUMNS: ColumnSpec[] = [
	{ key: 'name', header: 'condition', aliases: ['quantity', 'parameter'], required: true, width: 20, note: 'temperature, opposing load, step size, scheme name, or [species] for a concentration.' },
	{ key: 'value', header: 'value', aliases: [], required: true, width: 16, note: 'A number (text for the scheme name).' },
	{ key: 'unit', header: 'unit', aliases: [], width: 10, note: 'K or °C; pN; nm or Å; M, mM, µM or nM.' },
	{ key: 'note', header: 'note', aliases: ['notes', 'comment', 'source'], width: 40, note: 'Free text, not imported.' }
];

/** Split "k forward (1/s or 1/(M·s))" into its name and the text inside the outer parentheses. */
export function splitHeader(text: string): { name: string; unit: string | null } {
	const open = text.indexOf('(');
	const close = text.lastIndexOf(')');
	if (open < 0 || close < open) return { name: text.trim(), unit: null };
	const unit = text.slice(open + 1, close).trim();
	return { name: text.slice(0, open).trim(), unit: unit === '' ? null : unit };
}

export function normalizeName(text: string): string {
	return text
		.normalize('NFKC')
		.toLowerCase()
		.replace(/[.'’`°:_]/g, '')
		.replace(/[\s\u00a0]+/g, ' ')
		.trim();
}

/** The spec whose header or alias matches a header cell's text, or null. */
export function matchColumn(headerText: string, specs: ColumnSpec[]): ColumnSpec | null {
	const name = normalizeName(splitHeader(headerText).name);
	if (name === '') return null;
	for (const spec of specs) {
		if (normalizeName(splitHeader(spec.header).name) === name) return spec;
		if (spec.aliases.some((a) => normalizeName(a) === name)) return spec;
	}
	return null;
}
