/**
 * The escapement.scheme/1 format: zod schema, the filled-in `Scheme` type and validation that reports
 * every problem at once with its JSON path (`steps[3].kForward`) and what to do about it.
 *
 * Source: the scheme conventions of Escapement's science notes (states, reversible steps with intrinsic
 * rate constants, binds/releases, reference reactions) [trade].
 * Cost: O(states + steps + species) plus one union–find pass for connectivity.
 * Invariants of a returned scheme: unique state, step and reaction ids; every step joins two different known
 * states; rates finite and ≥ 0; every bound/released/stoichiometric species has a concentration > 0;
 * the undirected graph of steps is connected; all defaults filled.
 */
import { z } from 'zod';

export const SCHEME_FORMAT = 'escapement.scheme/1';
export const AUDIT_FORMAT = 'escapement.audit/1';
export const ENGINE_VERSION = '0.1.0';

/**
 * The largest scheme Escapement takes, everywhere (import, JSON API, editor): the audit's steady state is O(states³)
 * and a page lists every step, so past these the work and the page no longer stay bounded. A connected scheme has at
 * least states − 1 steps.
 */
export const SCHEME_LIMITS = { states: 5000, steps: 5000 } as const;

/**
 * Longest ids and species names, labels and scheme name, in characters (a 5 MB label once made a 25 MB page), and
 * the largest concentration in mol/L (1e308 M overflowed the rates to infinity).
 */
export const TEXT_LIMITS = { id: 100, label: 200, name: 200, concentrationM: 1000 } as const;

export interface SchemeState {
	id: string;
	label?: string;
}

export interface SchemeStep {
	id: string;
	from: string;
	to: string;
	/** s⁻¹, times M⁻¹ for each species in `binds`. */
	kForward: number;
	/** s⁻¹, times M⁻¹ for each species in `releases`. */
	kBackward: number;
	binds: string[];
	releases: string[];
	displacementNm: number;
	loadFraction: number;
	relUncertaintyForward: number | null;
	relUncertaintyBackward: number | null;
}

export interface SchemeReaction {
	id: string;
	/** Change of each species in solution when the reaction runs once forward (ATP −1, ADP +1, Pi +1). */
	stoichiometry: Record<string, number>;
	deltaG0kJPerMol: number;
}

export interface Scheme {
	format: typeof SCHEME_FORMAT;
	name: string;
	temperatureK: number;
	forcePN: number;
	stepSizeNm: number | null;
	concentrationsM: Record<string, number>;
	reactions: SchemeReaction[];
	states: SchemeState[];
	steps: SchemeStep[];
}

export interface SchemeError {
	path: string;
	message: string;
	/** set when the scheme is refused for its size: which of SCHEME_LIMITS it passes */
	limit?: keyof typeof SCHEME_LIMITS;
}

export type ParseResult = { ok: true; scheme: Scheme } | { ok: false; errors: SchemeError[] };

const text = (what: string) =>
	z
		.string({ error: `${what} must be a non-empty string` })
		.min(1, { error: `${what} must not be empty` })
		.max(TEXT_LIMITS.id, { error: `${what} is longer than ${TEXT_LIMITS.id} characters; use a short id` });
const finite = (what: string) => z.number({ error: `${what} must be a finite number` });
const rate = (what: string, per: string) =>
	z
		.number({ error: `${what} must be a finite number ≥ 0 (s⁻¹${per}); write 0 for a step that never goes this way` })
		.nonnegative({ error: `${what} must not be negative; give the rate constant (s⁻¹${per}) or 0` });
const uncertainty = (what: string) =>
	z
		.number({ error: `${what} must be a relative standard uncertainty ≥ 0 (0.1 = 10 %) or null` })
		.nonnegative({ error: `${what} must be ≥ 0 (0.1 = 10 %)` })
		.nullable()
		.default(null);

const speciesKey = z
	.string()
	.min(1, { error: 'species names must not be empty' })
	.max(TEXT_LIMITS.id, { error: `species names must be at most ${TEXT_LIMITS.id} characters` });

const stateSchema = z.object(
	{
		id: text('state id'),
		label: z
			.string({ error: 'label must be a string' })
			.max(TEXT_LIMITS.label, { error: `label is longer than ${TEXT_LIMITS.label} characters; keep it short (details go in the description)` })
			.optional()
	},
	{ error: 'each state must be an object like { "id": "A" }' }
);

const stepSchema = z.object(
	{
		id: text('step id'),
		from: text('from (a state id)'),
		to: text('to (a state id)'),
		kForward: rate('kForward', ', times M⁻¹ per bound species'),
		kBackward: rate('kBackward', ', times M⁻¹ per released species'),
		binds: z.array(text('species name'), { error: 'binds must be a list of species names' }).default([]),
		releases: z.array(text('species name'), { error: 'releases must be a list of species names' }).default([]),
		displacementNm: finite('displacementNm (nm moved forward along the track)').default(0),
		loadFraction: z
			.number({ error: 'loadFraction must be a number between 0 and 1' })
			.min(0, { error: 'loadFraction must be between 0 and 1 (0.5 splits the load evenly)' })
			.max(1, { error: 'loadFraction must be between 0 and 1 (0.5 splits the load evenly)' })
			.default(0.5),
		relUncertaintyForward: uncertainty('relUncertaintyForward'),
		relUncertaintyBackward: uncertainty('relUncertaintyBackward')
	},
	{ error: 'each step must be an object with id, from, to, kForward and kBackward' }
);

const reactionSchema = z.object(
	{
		id: text('reaction id'),
		stoichiometry: z.record(
			speciesKey,
			z.number({ error: 'stoichiometric coefficients must be finite numbers (−1 taken up, +1 released)' }),
			{ error: 'stoichiometry must be an object like { "ATP": -1, "ADP": 1, "Pi": 1 }' }
		),
		deltaG0kJPerMol: finite('deltaG0kJPerMol (standard free energy of the reaction, kJ/mol)')
	},
	{ error: 'each reaction must be an object with id, stoichiometry and deltaG0kJPerMol' }
);

export const schemeSchema = z.object(
	{
		format: z
			.literal(SCHEME_FORMAT, { error: `format must be "${SCHEME_FORMAT}" (or leave it out)` })
			.default(SCHEME_FORMAT),
		name: z
			.string({ error: 'name must be a string' })
			.max(TEXT_LIMITS.name, { error: `name is longer than ${TEXT_LIMITS.name} characters` })
			.default(''),
		temperatureK: z
			.number({ error: 'temperatureK must be a number in kelvin' })
			.positive({ error: 'temperatureK must be above 0 K (298.15 is 25 °C)' })
			.default(298.15),
		forcePN: finite('forcePN (opposing load in pN, positive resists forward motion)').default(0),
		stepSizeNm: z
			.number({ error: 'stepSizeNm must be a positive number of nm or null' })
			.positive({ error: 'stepSizeNm must be positive (nm per motor step) or null' })
			.nullable()
			.default(null),
		concentrationsM: z
			.record(
				speciesKey,
				z
					.number({ error: 'concentrations must be numbers in mol/L' })
					.positive({ error: 'concentrations must be above 0 M; for "none added" give a small value such as 1e-9' })
					.max(TEXT_LIMITS.concentrationM, { error: `concentrations must be at most ${TEXT_LIMITS.concentrationM} M (pure water is 55 M); check the unit` }),
				{ error: 'concentrationsM must be an object like { "ATP": 1e-3 }' }
			)
			.default({}),
		reactions: z.array(reactionSchema, { error: 'reactions must be a list' }).default([]),
		states: z.array(stateSchema, { error: 'states must be a list of { "id": … }' }).min(1, {
			error: 'a scheme needs at least one state'
		}),
		steps: z.array(stepSchema, { error: 'steps must be a list of steps' }).default([])
	},
	{ error: 'a scheme must be a JSON object' }
);

/** "2 ATP + H2O → ADP + Pi" text of a stoichiometry (negative: taken up, positive: released). */
export function formatEquation(stoichiometry: Record<string, number>): string {
	const side = (sign: number) =>
		Object.entries(stoichiometry)
			.filter(([, n]) => Math.sign(n) === sign)
			.map(([s, n]) => (Math.abs(n) === 1 ? s : `${Math.abs(n)} ${s}`))
			.join(' + ');
	return `${side(-1)} → ${side(1)}`;
}

/** `['steps', 3, 'kForward']` → `steps[3].kForward`. */
export function formatPath(path: readonly PropertyKey[]): string {
	let out = '';
	for (const key of path) {
		if (typeof key === 'number') out += `[${key}]`;
		else {
			const name = String(key);
			if (/^[A-Za-z_$][\w$]*$/.test(name)) out += out ? `.${name}` : name;
			else out += `[${JSON.stringify(name)}]`;
		}
	}
	return out || '$';
}

type Loose = Record<string, unknown>;
const isObject = (v: unknown): v is Loose => typeof v === 'object' && v !== null && !Array.isArray(v);
const asArray = (v: unknown): unknown[] => (Array.isArray(v) ? v : []);

/** Cross-reference checks; run on the raw input so they still report when some fields are malformed. */
function crossCheck(raw: Loose): SchemeError[] {
	const errors: SchemeError[] = [];
	const concentrations = isObject(raw.concentrationsM) ? raw.concentrationsM : {};
	const states = asArray(raw.states);
	const stateIndex = new Map<string, number>();
	states.forEach((state, i) => {
		if (!isObject(state) || typeof state.id !== 'string' || !state.id) return;
		if (stateIndex.has(state.id))
			errors.push({
				path: `states[${i}].id`,
				message: `duplicate state id "${state.id}" (also states[${stateIndex.get(state.id)}]); give every state its own id`
			});
		else stateIndex.set(state.id, i);
	});

	const reactionIds = new Map<string, number>();
	asArray(raw.reactions).forEach((reaction, i) => {
		if (!isObject(reaction)) return;
		if (typeof reaction.id === 'string') {
			if (reactionIds.has(reaction.id))
				errors.push({
					path: `reactions[${i}].id`,
					message: `duplicate reaction id "${reaction.id}"; give every reference reaction its own id`
				});
			else reactionIds.set(reaction.id, i);
		}
		if (isObject(reaction.stoichiometry)) {
			for (const species of Object.keys(reaction.stoichiometry))
				if (!Object.hasOwn(concentrations, species))
					errors.push({
						path: formatPath(['reactions', i, 'stoichiometry', species]),
						message: `species "${species}" has no concentration; add it to concentrationsM (mol/L)`
					});
		}
	});

	const parent = states.map((_, i) => i);
	const find = (i: number): number => {
		while (parent[i] !== i) i = parent[i] = parent[parent[i]];
		return i;
	};
	const stepIds = new Map<string, number>();
	asArray(raw.steps).forEach((step, i) => {
		if (!isObject(step)) return;
		if (typeof step.id === 'string' && step.id) {
			if (stepIds.has(step.id))
				errors.push({
					path: `steps[${i}].id`,
					message: `duplicate step id "${step.id}" (also steps[${stepIds.get(step.id)}]); give every step its own id`
				});
			else stepIds.set(step.id, i);
		}
		for (const end of ['from', 'to'] as const) {
			const id = step[end];
			if (typeof id === 'string' && id && !stateIndex.has(id))
				errors.push({
					path: `steps[${i}].${end}`,
					message: `unknown state "${id}"; add it to states or use one of: ${[...stateIndex.keys()].slice(0, 8).join(', ')}`
				});
		}
		if (typeof step.from === 'string' && step.from && step.from === step.to)
			errors.push({
				path: `steps[${i}].to`,
				message: `step goes from "${step.from}" to itself; a step must join two different states (drop it or fix "to")`
			});
		for (const list of ['binds', 'releases'] as const)
			asArray(step[list]).forEach((species, j) => {
				if (typeof species === 'string' && species && !Object.hasOwn(concentrations, species))
					errors.push({
						path: `steps[${i}].${list}[${j}]`,
						message: `species "${species}" has no concentration; add it to concentrationsM (mol/L)`
					});
			});
		const a = stateIndex.get(step.from as string);
		const b = stateIndex.get(step.to as string);
		if (a !== undefined && b !== undefined) parent[find(a)] = find(b);
	});

	if (stateIndex.size > 1 && errors.every((e) => !/^steps\[\d+\]\.(from|to)$/.test(e.path))) {
		const root = find(0);
		const apart = [...stateIndex.entries()].filter(([, i]) => find(i) !== root).map(([id]) => id);
		if (apart.length)
			errors.push({
				path: 'steps',
				message: `the scheme is disconnected: no chain of steps joins "${(states[0] as Loose).id}" to ${apart
					.slice(0, 5)
					.map((id) => `"${id}"`)
					.join(', ')}${apart.length > 5 ? ' …' : ''}; add steps between them or split the scheme`
			});
	}
	return errors;
}

/** Counts past SCHEME_LIMITS, checked before anything else so an oversized document is never validated item by item. */
function sizeErrors(input: unknown): SchemeError[] {
	if (!isObject(input)) return [];
	const errors: SchemeError[] = [];
	for (const key of ['states', 'steps'] as const) {
		const list = input[key];
		if (Array.isArray(list) && list.length > SCHEME_LIMITS[key])
			errors.push({
				path: key,
				limit: key,
				message: `${list.length} ${key}; the limit is ${SCHEME_LIMITS[key]} ${key} per scheme. Split the scheme into parts, or lump fast steps together.`
			});
	}
	return errors;
}

export function parseScheme(input: unknown): ParseResult {
	const tooLarge = sizeErrors(input);
	if (tooLarge.length) return { ok: false, errors: tooLarge };
	const parsed = schemeSchema.safeParse(input);
	const errors: SchemeError[] = parsed.success
		? []
		: parsed.error.issues.map((issue) => ({ path: formatPath(issue.path), message: issue.message }));
	if (isObject(input)) errors.push(...crossCheck(input));
	if (errors.length || !parsed.success) return { ok: false, errors };
	return { ok: true, scheme: parsed.data as Scheme };
}

/** An Error carrying the module name, raised when an engine computation cannot proceed. */
export class EngineError extends Error {
	constructor(module: string, message: string) {
		super(`${module}: ${message}`);
		this.name = 'EngineError';
	}
}
