/**
 * Reading one cell as a number or as text, the way a careful person would.
 *
 * Numbers typed as text, with a decimal comma, with digit groups separated by spaces, in "2 × 10^6" or
 * "2·10⁶" notation, or with a trailing % are read, and every reading that is not plain is reported as a
 * warning. What cannot be read without guessing ("1,500": one and a half, or fifteen hundred?) is an
 * error that says how to write it. A formula cell gives its cached result; without one it is an error.
 * Invariant: a value is never silently misread; the caller gets a number, `null` for an empty cell, or
 * `undefined` after an error was recorded.
 */
import { IssueList, type CellRef, type RawCell } from './types';

const SUPERSCRIPT: Record<string, string> = {
	'⁰': '0', '¹': '1', '²': '2', '³': '3', '⁴': '4', '⁵': '5', '⁶': '6', '⁷': '7', '⁸': '8', '⁹': '9',
	'⁻': '-', '⁺': '+'
};

export type NumberReading = { value: number; notes: string[] } | { error: string };

/** Parse a number written as text. Notes describe any non-plain reading (decimal comma, …). */
export function parseNumberText(input: string): NumberReading {
	const notes: string[] = [];
	let s = input.replace(/[\u00a0\u2007\u2009\u202f]/g, ' ').trim();
	if (s === '') return { error: 'empty' };
	// "10⁶" → "10^6" before anything else touches the superscripts.
	s = s.replace(/10([⁻⁺]?[⁰¹²³⁴⁵⁶⁷⁸⁹]+)/g, (_m, sup: string) => '10^' + [...sup].map((c) => SUPERSCRIPT[c]).join(''));
	s = s.replace(/^[\u2212\u2013]/, '-').replace(/([eE^]\s*)[\u2212\u2013]/, '$1-');
	let scale = 1;
	if (s.endsWith('%')) {
		scale = 0.01;
		s = s.slice(0, -1).trim();
		notes.push(`"${input.trim()}" read as a percentage: ${s} % = ${Number.isFinite(Number(s)) ? Number(s) / 100 : s + '/100'}`);
	}
	const m = /^([+-]?[0-9][0-9., ]*|[+-]?[.,][0-9]+)\s*(?:[eE]\s*([+-]?\d+)|(?:[×xX·*]|\\cdot)\s*10\s*\^\s*\(?([+-]?\d+)\)?)?$/.exec(s);
	if (!m) {
		return { error: `"${input.trim()}" is not a number. Type a plain number such as 2.5e6 or 0.35.` };
	}
	let mantissa = m[1].trim();
	const exponent = m[2] ?? m[3];
	if (/\s/.test(mantissa)) {
		if (/^[+-]?\d{1,3}( \d{3})+([.,]\d+)?$/.test(mantissa)) {
			const joined = mantissa.replace(/ /g, '');
			notes.push(`"${input.trim()}" read as ${joined} (spaces between digit groups)`);
			mantissa = joined;
		} else {
			return { error: `"${input.trim()}" has spaces inside the number. Remove them (write e.g. 1500 or 1.5).` };
		}
	}
	const commas = (mantissa.match(/,/g) ?? []).length;
	const dots = (mantissa.match(/\./g) ?? []).length;
	if (commas > 0 && dots > 0) {
		return { error: `"${input.trim()}" mixes commas and points. Write it without digit-group separators and with a decimal point, e.g. 1234.5.` };
	}
	if (commas > 1 || dots > 1) {
		return { error: `"${input.trim()}" has more than one separator. Write it without digit-group separators, e.g. 1500000.` };
	}
	if (commas === 1) {
		const [intPart, frac] = mantissa.replace(/^[+-]/, '').split(',');
		if (frac.length === 3 && intPart !== '' && !/^0+$/.test(intPart)) {
			return { error: `"${input.trim()}" is ambiguous: a decimal comma or a thousands separator? Write ${intPart}.${frac} or ${intPart}${frac}.` };
		}
		mantissa = mantissa.replace(',', '.');
		notes.push(`"${input.trim()}" read with a decimal comma as ${mantissa}`);
	}
	const value = Number(mantissa + (exponent !== undefined ? 'e' + exponent : '')) * scale;
	if (!Number.isFinite(value)) {
		return { error: `"${input.trim()}" is out of range. Type a finite number.` };
	}
	if (exponent !== undefined && m[3] !== undefined) notes.push(`"${input.trim()}" read as ${value}`);
	return { value, notes };
}

function describeProblem(cell: RawCell, what: string): string | null {
	const v = cell.value;
	switch (v.kind) {
		case 'formula-without-result':
			return `${what}: the formula =${v.formula} has no saved result (the file was written by a program that does not calculate). Open the file in a spreadsheet program and save it again, or type the value.`;
		case 'error':
			return `${what}: the cell shows the error ${v.text}. Fix the formula or type the value.`;
		case 'date':
			return `${what}: the cell holds a date. Format the cell as a number and type the value again.`;
		case 'bool':
			return `${what}: the cell holds ${v.value ? 'TRUE' : 'FALSE'}. Type a number.`;
		default:
			return null;
	}
}

/** The cell's value, null for an empty cell, undefined after the cell's problem was recorded as an error. */
function readableValue(
	cell: RawCell | undefined,
	at: CellRef,
	issues: IssueList,
	what: string
): RawCell['value'] | null | undefined {
	if (!cell || cell.value.kind === 'empty') return null;
	const problem = describeProblem(cell, what);
	if (problem) {
		issues.error(at, problem);
		return undefined;
	}
	return cell.value;
}

/** A number, null for an empty cell, undefined when an error was recorded. */
export function readNumber(
	cell: RawCell | undefined,
	at: CellRef,
	issues: IssueList,
	what: string
): number | null | undefined {
	const v = readableValue(cell, at, issues, what);
	if (!v) return v;
	if (v.kind === 'number') {
		if (!Number.isFinite(v.value)) {
			issues.error(at, `${what}: the value is not a finite number. Type a number.`);
			return undefined;
		}
		return v.value;
	}
	if (v.kind === 'text') {
		if (v.text.trim() === '') return null;
		const r = parseNumberText(v.text);
		if ('error' in r) {
			issues.error(at, `${what}: ${r.error}`);
			return undefined;
		}
		for (const note of r.notes) issues.warn(at, `${what}: ${note}. Check it, or type the number as a plain number.`);
		return r.value;
	}
	return undefined;
}

/** Text of a cell (numbers become their shortest text), trimmed; null when empty, undefined after an error. */
export function readText(
	cell: RawCell | undefined,
	at: CellRef,
	issues: IssueList,
	what: string
): string | null | undefined {
	const v = readableValue(cell, at, issues, what);
	if (!v) return v;
	if (v.kind === 'number') return String(v.value);
	if (v.kind === 'text') {
		const t = v.text.replace(/[\u00a0\u2007\u2009\u202f]/g, ' ').replace(/\s+/g, ' ').trim();
		return t === '' ? null : t;
	}
	return undefined;
}
