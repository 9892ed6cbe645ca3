/**
 * How numbers read on the audit pages: a few significant figures, a true minus sign, and powers of ten written
 * as 1.2 × 10⁻³⁰ instead of 1.2e-30 so that tiny probabilities and huge rates stay readable.
 * Invariants: null, undefined and non-finite values print as an em dash or ∞ — never as "NaN".
 */

const SUPERSCRIPT: Record<string, string> = {
	'-': '⁻',
	'0': '⁰',
	'1': '¹',
	'2': '²',
	'3': '³',
	'4': '⁴',
	'5': '⁵',
	'6': '⁶',
	'7': '⁷',
	'8': '⁸',
	'9': '⁹'
};

const MINUS = '−';

/** 10 to an integer power, written with superscript digits: 10⁻⁷. */
export function powerOfTen(exponent: number): string {
	return '10' + String(exponent).replace(/[-0-9]/g, (c) => SUPERSCRIPT[c]);
}

function withMinus(text: string): string {
	return text.replace(/^-/, MINUS);
}

/** Drops trailing zeros of a decimal: "1.500" → "1.5", "2.000" → "2". */
function trimZeros(text: string): string {
	return text.includes('.') && !text.includes('e') ? text.replace(/0+$/, '').replace(/\.$/, '') : text;
}

/**
 * A number with `digits` significant figures; plain between 10⁻³ and 10⁵, otherwise m × 10ᵉ.
 * `null` for a missing value prints "—".
 */
export function formatNumber(value: number | null | undefined, digits = 3): string {
	if (value === null || value === undefined || Number.isNaN(value)) return '—';
	if (!Number.isFinite(value)) return value > 0 ? '∞' : `${MINUS}∞`;
	if (value === 0) return '0';
	const magnitude = Math.abs(value);
	if (magnitude >= 1e-3 && magnitude < 1e5) {
		const text = trimZeros(value.toPrecision(digits));
		// toPrecision may still choose exponent form (e.g. 12345 with 3 digits → "1.23e+4")
		if (!text.includes('e')) return withMinus(text);
		return withMinus(trimZeros(Number(text).toFixed(0)));
	}
	const [mantissa, exponent] = value.toExponential(digits - 1).split('e');
	const m = trimZeros(mantissa);
	const power = powerOfTen(Number(exponent));
	return withMinus(m === '1' ? power : m === '-1' ? `-${power}` : `${m} × ${power}`);
}

/** A signed number with fixed decimals and a true minus sign: +0.32, −1.60. */
export function formatSigned(value: number | null | undefined, decimals = 2): string {
	if (value === null || value === undefined || !Number.isFinite(value)) return '—';
	const text = Math.abs(value).toFixed(decimals);
	if (Number(text) === 0) return text;
	return (value < 0 ? MINUS : '+') + text;
}

/** A number with fixed decimals and a true minus sign. */
export function formatFixed(value: number | null | undefined, decimals = 2): string {
	if (value === null || value === undefined || !Number.isFinite(value)) return '—';
	const text = value.toFixed(decimals);
	return Number(text) === 0 ? Math.abs(0).toFixed(decimals) : withMinus(text);
}

/** Axis tick label: powers of ten on log axes, short plain numbers on linear ones. */
export function formatTick(value: number, log: boolean): string {
	if (log) return powerOfTen(Math.round(Math.log10(value)));
	return formatNumber(value, 4);
}
