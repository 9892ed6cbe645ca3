/**
 * Scales and ticks for the small SVG plots of the audit page (velocity against load and against a
 * concentration). Linear ticks are "nice" steps of 1, 2 or 5 × 10^k; log ticks sit on powers of ten, thinned
 * to every second or third decade when the range is wide.
 *
 * Source: the 1-2-5 tick rule of Heckbert, "Nice numbers for graph labels", Graphics Gems (1990) [pub].
 * Invariants: every tick lies inside the domain; a scale maps domain ends exactly to range ends.
 */

export interface Scale {
	(value: number): number;
	domain: [number, number];
	range: [number, number];
	ticks: number[];
	kind: 'linear' | 'log';
}

/** Step of about `span / count` rounded to 1, 2 or 5 × 10^k. */
export function niceStep(span: number, count: number): number {
	if (!(span > 0) || !(count > 0)) throw new Error('plot-scale: niceStep needs a positive span and tick count');
	const raw = span / count;
	const power = 10 ** Math.floor(Math.log10(raw));
	const fraction = raw / power;
	const nice = fraction < 1.5 ? 1 : fraction < 3 ? 2 : fraction < 7 ? 5 : 10;
	return nice * power;
}

/** Domain widened outward to whole nice steps (so that the axis ends on a tick). */
export function niceDomain(lo: number, hi: number, count = 5): [number, number] {
	if (!Number.isFinite(lo) || !Number.isFinite(hi)) throw new Error('plot-scale: niceDomain needs finite ends');
	if (lo === hi) {
		const pad = lo === 0 ? 1 : Math.abs(lo) * 0.1;
		return niceDomain(lo - pad, hi + pad, count);
	}
	if (lo > hi) [lo, hi] = [hi, lo];
	const step = niceStep(hi - lo, count);
	return [Math.floor(lo / step) * step, Math.ceil(hi / step) * step];
}

/** Ticks at multiples of a nice step inside [lo, hi]; rounding noise (0.30000000000000004) removed. */
export function linearTicks(lo: number, hi: number, count = 5): number[] {
	if (lo > hi) [lo, hi] = [hi, lo];
	if (lo === hi) return [lo];
	const step = niceStep(hi - lo, count);
	const digits = Math.max(0, -Math.floor(Math.log10(step)) + 1);
	const ticks: number[] = [];
	for (let k = Math.ceil(lo / step - 1e-9); k * step <= hi + step * 1e-9; k++) ticks.push(Number((k * step).toFixed(digits)));
	return ticks;
}

/** Powers of ten inside [lo, hi] (lo > 0), every `stride`-th decade so that at most `maxTicks` remain. */
export function logTicks(lo: number, hi: number, maxTicks = 7): number[] {
	if (!(lo > 0) || !(hi > 0)) throw new Error('plot-scale: a log axis needs positive ends');
	if (lo > hi) [lo, hi] = [hi, lo];
	const first = Math.ceil(Math.log10(lo) - 1e-9);
	const last = Math.floor(Math.log10(hi) + 1e-9);
	const decades = last - first + 1;
	const stride = Math.max(1, Math.ceil(decades / maxTicks));
	const ticks: number[] = [];
	for (let e = first; e <= last; e += stride) ticks.push(Number(`1e${e}`));
	return ticks;
}

export function linearScale(domain: [number, number], range: [number, number], tickCount = 5): Scale {
	const [d0, d1] = domain;
	const [r0, r1] = range;
	const span = d1 - d0;
	const scale = ((v: number) => (span === 0 ? (r0 + r1) / 2 : r0 + ((v - d0) / span) * (r1 - r0))) as Scale;
	scale.domain = domain;
	scale.range = range;
	scale.ticks = linearTicks(d0, d1, tickCount);
	scale.kind = 'linear';
	return scale;
}

export function logScale(domain: [number, number], range: [number, number], maxTicks = 7): Scale {
	const [d0, d1] = domain;
	if (!(d0 > 0) || !(d1 > 0)) throw new Error('plot-scale: a log scale needs a positive domain');
	const [r0, r1] = range;
	const l0 = Math.log10(d0);
	const span = Math.log10(d1) - l0;
	const scale = ((v: number) => (span === 0 ? (r0 + r1) / 2 : r0 + ((Math.log10(v) - l0) / span) * (r1 - r0))) as Scale;
	scale.domain = domain;
	scale.range = range;
	scale.ticks = logTicks(d0, d1, maxTicks);
	scale.kind = 'log';
	return scale;
}

/** `count` points from `from` to `to`, evenly spaced, or evenly spaced in log10 when `log`. */
export function spacedPoints(from: number, to: number, count: number, log: boolean): number[] {
	if (count < 2) return [from];
	if (log && !(from > 0 && to > 0)) throw new Error('plot-scale: log spacing needs positive ends');
	const a = log ? Math.log10(from) : from;
	const b = log ? Math.log10(to) : to;
	return Array.from({ length: count }, (_, i) => {
		if (i === 0) return from;
		if (i === count - 1) return to;
		const t = a + ((b - a) * i) / (count - 1);
		return log ? 10 ** t : t;
	});
}
