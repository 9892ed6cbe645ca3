/**
 * Hostile text, refused before it reaches a service: NUL and other control characters (PostgreSQL cannot store NUL
 * in text or jsonb), lone UTF-16 surrogates (silently turned into U+FFFD on the way to the database), bidi override
 * and isolate controls (text that displays in another order than it is stored, "Trojan Source"), and in scheme ids
 * and species names: look-alike ids (Latin A and Cyrillic А) and names of JavaScript object properties
 * (`__proto__`, `constructor`, `toString`), which plain-object lookups would resolve to something else.
 * Each finding names the field (a JSON path or form field) and what to do.
 */
import { formatPath, type SchemeError } from '../engine';

export interface InputIssue {
	path: string;
	message: string;
}

// Tab, newline and carriage return are ordinary in descriptions and notes; every other C0/C1 control is not.
const CONTROL = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f-\u009f]/;
const BIDI = /[\u202a-\u202e\u2066-\u2069]/;
/** Invisible or direction-changing characters that have no place in an id. */
const INVISIBLE = /[\p{Cc}\p{Cf}\u2028\u2029]/u;

const hex = (ch: string) => `U+${ch.codePointAt(0)!.toString(16).toUpperCase().padStart(4, '0')}`;

/** What is wrong with one text value anywhere in a request, or null. */
export function textProblem(value: string): string | null {
	if (!value.isWellFormed()) return 'contains a broken character (a lone UTF-16 surrogate); retype the text or save the file as UTF-8';
	const control = CONTROL.exec(value);
	if (control) return `contains the control character ${hex(control[0])}${control[0] === '\u0000' ? ' (NUL)' : ''}, which text here may not hold; remove it`;
	const bidi = BIDI.exec(value);
	if (bidi) return `contains the direction-changing character ${hex(bidi[0])}, which makes text display in another order than it is stored; remove it`;
	return null;
}

const MAX_ISSUES = 20;

/** Every string (and object key) of a parsed JSON body, checked with textProblem. */
export function jsonTextIssues(value: unknown): InputIssue[] {
	const issues: InputIssue[] = [];
	const walk = (v: unknown, path: (string | number)[], depth: number) => {
		if (issues.length >= MAX_ISSUES) return;
		if (depth > 64) {
			issues.push({ path: formatPath(path), message: 'is nested more than 64 levels deep; a scheme never needs that' });
			return;
		}
		if (typeof v === 'string') {
			const problem = textProblem(v);
			if (problem) issues.push({ path: formatPath(path), message: problem });
		} else if (Array.isArray(v)) v.forEach((item, i) => walk(item, [...path, i], depth + 1));
		else if (v && typeof v === 'object')
			for (const [k, item] of Object.entries(v)) {
				const problem = textProblem(k);
				if (problem) issues.push({ path: formatPath([...path, k.slice(0, 40)]), message: `the name ${problem}` });
				walk(item, [...path, k], depth + 1);
			}
	};
	walk(value, [], 0);
	return issues;
}

/** Names plain-object lookups resolve through the prototype: never a species, state, step or reaction id. */
const RESERVED = new Set(Object.getOwnPropertyNames(Object.prototype).concat(['prototype']));

/** Latin look-alikes from the Cyrillic and Greek alphabets (Unicode confusables for the letters ids use). */
const CONFUSABLE: Record<string, string> = Object.fromEntries(
	[...'АВЕКМНОРСТХаеорсухіјѕԁԛԝ'].map((c, i) => [c, 'ABEKMHOPCTXaeopcyxijsdqw'[i]]).concat([...'ΑΒΕΖΗΙΚΜΝΟΡΤΥΧον'].map((c, i) => [c, 'ABEZHIKMNOPTYXov'[i]]))
);
const skeleton = (id: string) => [...id.normalize('NFKC')].map((c) => CONFUSABLE[c] ?? c).join('');
const scriptsOf = (id: string) => new Set([...id].map((c) => (/\p{Script=Latin}/u.test(c) ? 'Latin' : /\p{Script=Cyrillic}/u.test(c) ? 'Cyrillic' : null)).filter(Boolean));

type Loose = Record<string, unknown>;
const isObject = (v: unknown): v is Loose => typeof v === 'object' && v !== null && !Array.isArray(v);
const list = (v: unknown): unknown[] => (Array.isArray(v) ? v : []);

/**
 * Ids and species names of a scheme document (before validation, so keys that a parser would drop are seen):
 * invisible characters, reserved names, mixed Latin and Cyrillic letters, and two ids that look the same.
 */
export function schemeIdIssues(input: unknown): SchemeError[] {
	if (!isObject(input)) return [];
	const errors: SchemeError[] = [];
	const groups: Record<string, { path: string; id: string }[]> = { state: [], step: [], reaction: [], species: [] };
	list(input.states).forEach((s, i) => isObject(s) && typeof s.id === 'string' && groups.state.push({ path: `states[${i}].id`, id: s.id }));
	list(input.steps).forEach((s, i) => {
		if (!isObject(s)) return;
		if (typeof s.id === 'string') groups.step.push({ path: `steps[${i}].id`, id: s.id });
		for (const key of ['binds', 'releases'] as const)
			list(s[key]).forEach((name, j) => typeof name === 'string' && groups.species.push({ path: `steps[${i}].${key}[${j}]`, id: name }));
	});
	list(input.reactions).forEach((r, i) => {
		if (!isObject(r)) return;
		if (typeof r.id === 'string') groups.reaction.push({ path: `reactions[${i}].id`, id: r.id });
		if (isObject(r.stoichiometry)) for (const name of Object.keys(r.stoichiometry)) groups.species.push({ path: formatPath(['reactions', i, 'stoichiometry', name.slice(0, 40)]), id: name });
	});
	if (isObject(input.concentrationsM)) for (const name of Object.keys(input.concentrationsM)) groups.species.push({ path: formatPath(['concentrationsM', name.slice(0, 40)]), id: name });

	for (const [kind, entries] of Object.entries(groups)) {
		const seen = new Map<string, { path: string; id: string }>();
		for (const entry of entries) {
			const what = kind === 'species' ? 'species name' : `${kind} id`;
			const shown = JSON.stringify(entry.id.slice(0, 40));
			const invisible = INVISIBLE.exec(entry.id);
			if (invisible) {
				errors.push({ path: entry.path, message: `${what} ${shown} contains the invisible or direction-changing character ${hex(invisible[0])}; retype it with visible letters only` });
				continue;
			}
			if (RESERVED.has(entry.id)) {
				errors.push({ path: entry.path, message: `${what} "${entry.id}" is a reserved name; call it something else, e.g. "${entry.id.replace(/^_+|_+$/g, '')}_1"` });
				continue;
			}
			if (scriptsOf(entry.id).size > 1) {
				errors.push({ path: entry.path, message: `${what} ${shown} mixes Latin and Cyrillic letters that look alike; type it in one alphabet` });
				continue;
			}
			const key = skeleton(entry.id);
			const twin = seen.get(key);
			if (twin && twin.id !== entry.id) errors.push({ path: entry.path, message: `${what} ${shown} looks the same as ${JSON.stringify(twin.id.slice(0, 40))} (${twin.path}) but is spelt with other letters; use ids that differ visibly` });
			else if (!twin) seen.set(key, entry);
		}
	}
	return errors;
}
