/**
 * Double-double arithmetic: a value is the unevaluated sum hi + lo of two doubles with |lo| ≤ ½ulp(hi), about 32
 * significant digits. Used where step fluxes p_from·k+ − p_to·k− cancel (rapid equilibrium, dead ends).
 *
 * Source: Dekker 1971, Numer Math 18:224 (exact product by splitting, exact sum) [pub]; Knuth, TAOCP vol. 2,
 * §4.2.2 (two-sum without branches) [pub].
 * Cost: a few tens of flops per operation, no allocation (results go into a caller's pair of arrays or `out`).
 * Invariants: exact for products and sums of doubles that neither overflow nor underflow; results are
 * normalised (hi = fl(hi + lo)).
 */

/** Scratch pair for results: out[0] = hi, out[1] = lo. */
export type DD = Float64Array;

export const dd = (): DD => new Float64Array(2);

const SPLIT = 134217729; // 2^27 + 1

/** out = a + b exactly (Knuth's two-sum). */
export function twoSum(a: number, b: number, out: DD): DD {
	const s = a + b;
	const bb = s - a;
	out[0] = s;
	out[1] = a - (s - bb) + (b - bb);
	return out;
}

/** out = a·b exactly (Dekker's product); a and b below 1e300 in size. */
export function twoProduct(a: number, b: number, out: DD): DD {
	const p = a * b;
	let t = SPLIT * a;
	const ah = t - (t - a);
	const al = a - ah;
	t = SPLIT * b;
	const bh = t - (t - b);
	const bl = b - bh;
	out[0] = p;
	out[1] = ah * bh - p + ah * bl + al * bh + al * bl;
	return out;
}

/** out = (ah + al) + (bh + bl), normalised. */
export function ddAdd(ah: number, al: number, bh: number, bl: number, out: DD): DD {
	const s = ah + bh;
	const v = s - ah;
	let e = ah - (s - v) + (bh - v);
	e += al + bl;
	out[0] = s + e;
	out[1] = e - (out[0] - s);
	return out;
}

/** out = (ah + al)·b, normalised. */
export function ddMulNumber(ah: number, al: number, b: number, out: DD): DD {
	twoProduct(ah, b, out);
	const ph = out[0];
	const pl = out[1] + al * b;
	out[0] = ph + pl;
	out[1] = pl - (out[0] - ph);
	return out;
}
