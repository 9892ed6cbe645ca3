import { describe, expect, it } from 'vitest';
import { formatFixed, formatNumber, formatSigned, formatTick, powerOfTen } from './number-format';

describe('formatNumber', () => {
	it('writes ordinary magnitudes plainly with 3 significant figures', () => {
		expect(formatNumber(397.23781822432375)).toBe('397');
		expect(formatNumber(0.07770454293088018)).toBe('0.0777');
		expect(formatNumber(1.5)).toBe('1.5');
		expect(formatNumber(-49.65)).toBe('−49.6');
		expect(formatNumber(12345)).toBe('12300');
	});
	it('writes tiny and huge values as m × 10ᵉ, readable for 1e-30', () => {
		expect(formatNumber(1.234e-30)).toBe('1.23 × 10⁻³⁰');
		expect(formatNumber(4.517023387658265e-9)).toBe('4.52 × 10⁻⁹');
		expect(formatNumber(2.2e6)).toBe('2.2 × 10⁶');
		expect(formatNumber(1e-7)).toBe('10⁻⁷');
		expect(formatNumber(-3e-12)).toBe('−3 × 10⁻¹²');
	});
	it('never prints NaN', () => {
		expect(formatNumber(null)).toBe('—');
		expect(formatNumber(undefined)).toBe('—');
		expect(formatNumber(Number.NaN)).toBe('—');
		expect(formatNumber(Number.POSITIVE_INFINITY)).toBe('∞');
		expect(formatNumber(0)).toBe('0');
	});
});

describe('signed and fixed', () => {
	it('uses a true minus sign and shows the sign of a deviation', () => {
		expect(formatSigned(-1.6020626275273457)).toBe('−1.60');
		expect(formatSigned(0.32)).toBe('+0.32');
		expect(formatSigned(-0.0001)).toBe('0.00');
		expect(formatFixed(-29.523, 1)).toBe('−29.5');
		expect(formatFixed(-0.001, 1)).toBe('0.0');
	});
});

describe('ticks and powers', () => {
	it('labels log ticks as powers of ten', () => {
		expect(powerOfTen(-7)).toBe('10⁻⁷');
		expect(powerOfTen(12)).toBe('10¹²');
		expect(formatTick(1e-3, true)).toBe('10⁻³');
		expect(formatTick(-5, false)).toBe('−5');
		expect(formatTick(2.5, false)).toBe('2.5');
	});
});
