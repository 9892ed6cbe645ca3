import { describe, expect, it } from 'vitest';
import { linearScale, linearTicks, logScale, logTicks, niceDomain, niceStep, spacedPoints } from './plot-scale';

describe('niceStep (1-2-5 rule, Heckbert 1990 [pub])', () => {
	it('rounds to 1, 2 or 5 times a power of ten', () => {
		expect(niceStep(25, 5)).toBe(5);
		expect(niceStep(10, 5)).toBe(2);
		expect(niceStep(0.9, 5)).toBeCloseTo(0.2, 12);
		expect(niceStep(700, 5)).toBe(100);
		for (const span of [0.0037, 1.3, 48, 930, 12_345]) {
			const step = niceStep(span, 5);
			const mantissa = step / 10 ** Math.floor(Math.log10(step) + 1e-12);
			expect([1, 2, 5, 10].some((m) => Math.abs(mantissa - m) < 1e-9)).toBe(true);
		}
	});
	it('refuses an empty span', () => {
		expect(() => niceStep(0, 5)).toThrow(/positive span/);
	});
});

describe('linear ticks', () => {
	it('covers the load sweep −10…15 pN with 5 pN steps [der]', () => {
		expect(linearTicks(-10, 15, 5)).toEqual([-10, -5, 0, 5, 10, 15]);
	});
	it('keeps every tick inside the domain and removes rounding noise', () => {
		const ticks = linearTicks(0.1, 0.7, 6);
		expect(ticks).toEqual([0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7]);
		for (const t of linearTicks(-3.3, 41.7, 5)) {
			expect(t).toBeGreaterThanOrEqual(-3.3);
			expect(t).toBeLessThanOrEqual(41.7);
		}
	});
	it('widens a domain to whole steps, and pads a flat one', () => {
		expect(niceDomain(-3.3, 41.7, 5)).toEqual([-10, 50]);
		const [lo, hi] = niceDomain(2, 2);
		expect(lo).toBeLessThan(2);
		expect(hi).toBeGreaterThan(2);
	});
});

describe('log ticks', () => {
	it('sits on powers of ten from 1e-7 to 1e-2 M', () => {
		expect(logTicks(1e-7, 1e-2)).toEqual([1e-7, 1e-6, 1e-5, 1e-4, 1e-3, 1e-2]);
	});
	it('thins a wide range to at most maxTicks decades', () => {
		const ticks = logTicks(1e-30, 1, 7);
		expect(ticks.length).toBeLessThanOrEqual(7);
		expect(ticks[0]).toBe(1e-30);
	});
	it('refuses non-positive ends', () => {
		expect(() => logTicks(0, 1)).toThrow(/positive/);
	});
});

describe('scales', () => {
	it('map domain ends onto range ends (y axis flipped)', () => {
		const y = linearScale([0, 400], [300, 20]);
		expect(y(0)).toBe(300);
		expect(y(400)).toBe(20);
		expect(y(200)).toBe(160);
	});
	it('place decades evenly on a log scale', () => {
		const x = logScale([1e-7, 1e-2], [0, 500]);
		expect(x(1e-7)).toBeCloseTo(0, 9);
		expect(x(1e-2)).toBeCloseTo(500, 9);
		expect(x(1e-5) - x(1e-6)).toBeCloseTo(x(1e-4) - x(1e-5), 9);
		expect(x(1e-6)).toBeCloseTo(100, 9);
	});
});

describe('spacedPoints', () => {
	it('spaces a load sweep evenly with exact ends', () => {
		const p = spacedPoints(-10, 15, 41, false);
		expect(p).toHaveLength(41);
		expect(p[0]).toBe(-10);
		expect(p[40]).toBe(15);
		expect(p[20]).toBeCloseTo(2.5, 12);
	});
	it('spaces concentrations evenly in log10', () => {
		const p = spacedPoints(1e-7, 1e-2, 6, true);
		expect(p[0]).toBe(1e-7);
		expect(p[5]).toBe(1e-2);
		for (let i = 1; i < 5; i++) expect(Math.log10(p[i])).toBeCloseTo(-7 + i, 12);
	});
	it('refuses log spacing through zero', () => {
		expect(() => spacedPoints(0, 1, 5, true)).toThrow(/positive/);
	});
});
