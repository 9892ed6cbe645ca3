/**
 * Stall forces: every load F (pN) at which the mean velocity V(F) changes sign, and, when there is none, why.
 *
 * Bracketing. By Hill's cycle decomposition V = Σ_κ J_κ·x_κ over every simple cycle, and each cycle flux takes the
 * sign of its affinity A_κ(F) = ln(Π+_κ/Π−_κ) (Hill, Free Energy Transduction and Biochemical Cycle Kinetics,
 * Springer 1989 [pub]). The load enters every step as −θF·d/kBT forward and +(1−θ)F·d/kBT backward (Bell 1978;
 * Fisher & Kolomeisky 1999 [pub]), so A_κ(F) = A_κ(F0) − (F − F0)·x_κ/kBT is linear in F and each cycle has its own
 * stall F_κ = F0 + kBT·A_κ(F0)/x_κ; sign(J_κ·x_κ) = sign(F_κ − F) [der]. With every simple cycle known, V > 0
 * below min F_κ and V < 0 above max F_κ, so every stall lies in [min F_κ, max F_κ], exactly Δμ/d for a tightly
 * coupled motor [der]. An irreversible cycle (a zero rate) keeps the sign of its term at every load, which opens
 * the bracket on one side, and when every moving cycle is irreversible the same way V never changes sign.
 * Without the cycles (too many to enumerate) the search scans ±maxForcePN.
 * Root finding: a uniform scan of the bracket (sinh-spaced without one, dense near zero load), a golden-section
 * probe of every dip of |V| that could hide two close roots, then Brent's method on each sign change
 * (Brent 1973, Algorithms for Minimization without Derivatives, ch. 4 [pub]).
 * Cost: one steady state (O(n³)) per evaluation of V; gridPoints + 1 for the scan, about 10 per root, none for a
 * tight bracket; O(cycles·length) for the bracket.
 * Invariants: roots ascending, independent of the order of states and steps and of writing a step backwards;
 * the result names the reason whenever no stall force is given.
 */
import type { Cycle } from './cycles';
import { effectiveRates, withConditions, type RateTable } from './rates';
import { velocityWithError } from './observables';
import { EngineError, type Scheme } from './scheme';
import { steadyState } from './steady-state';

export const STALL_DEFAULTS = {
	/** largest |load| searched, pN (capped further where exp(F·d/kBT) would overflow) */
	maxForcePN: 1000,
	toleranceForcePN: 1e-9,
	maxIterations: 200,
	/** intervals of the scan */
	gridIntervals: 32,
	/** every simple cycle of the scheme (a complete enumeration); null scans without the exact bracket */
	cycles: null as Cycle[] | null,
	/** multiply–adds allowed for the scan (evaluations × states³); past it the search is not run */
	maxWork: Infinity,
	/** ln p at the scheme's own conditions when the caller has it (saves a steady state): which states are occupied */
	logP: null as Float64Array | null
};
export type StallOptions = typeof STALL_DEFAULTS;

export type StallReason = 'no-motion' | 'irreversible' | 'out-of-range' | 'not-evaluable' | 'not-searched';

export interface StallSearch {
	/** the sign change nearest zero load, null when there is none */
	stallForcePN: number | null;
	/** every sign change found, ascending; null when the search was not run */
	stallForcesPN: number[] | null;
	/** how far each stall force may lie from the true one, pN: the error of V over its slope (parallel to stallForcesPN) */
	uncertaintiesPN: number[] | null;
	/** loads scanned, pN (null when no evaluation was needed or none was run) */
	searchedPN: [number, number] | null;
	/** [min F_κ, max F_κ] over the cycles when they were given (±Infinity on a side an irreversible cycle opens) */
	cycleBracketPN: [number, number] | null;
	/** why stallForcePN is null */
	reason: StallReason | null;
	/** the reason in words, or a note on several stall forces */
	message: string | null;
	/** evaluations of V */
	evaluations: number;
}

const fmt = (x: number) => Number(x.toPrecision(4)).toString();

/**
 * V at a load with a bound on its error, from observables.ts (V summed so that its error is relative to itself, with
 * the estimate of that error). A sign is trusted only where |V| exceeds the bound. Where a rate has left the normal
 * double range or an occupied state is lost entirely (underflow at extreme loads), the bound is infinite: the sign
 * there is unknown.
 */
function loadedVelocity(loaded: LoadedRates, forcePN: number, live: LiveParts): { v: number; err: number } {
	const table = loaded.at(forcePN);
	const ss = steadyState(table);
	const { velocity, velocityError } = velocityWithError(table, ss);
	let underflow = false;
	for (let s = 0; s < table.m; s++)
		if ((live.plus[s] && !(table.kPlus[s] >= TINY)) || (live.minus[s] && !(table.kMinus[s] >= TINY))) underflow = true;
	for (let i = 0; i < table.n; i++) if (live.occupied[i] && ss.logP[i] === -Infinity) underflow = true;
	return { v: velocity, err: underflow ? Infinity : velocityError };
}

/**
 * The rate table at any load from the unloaded one: k+ = k+(0)·exp(−θ·F·d/kBT), k− = k−(0)·exp((1−θ)·F·d/kBT), as
 * rates.ts computes them (and their logarithms), without rebuilding the scheme for every evaluation (one table, refilled).
 */
interface LoadedRates {
	at(forcePN: number): RateTable;
}

function loadedRates(scheme: Scheme): LoadedRates {
	const unloaded = effectiveRates(withConditions(scheme, { forcePN: 0 }));
	const m = unloaded.m;
	const table: RateTable = { ...unloaded, kPlus: new Float64Array(m), kMinus: new Float64Array(m), lnPlus: new Float64Array(m), lnMinus: new Float64Array(m) };
	const forward = Float64Array.from(scheme.steps, (st) => (-st.loadFraction * st.displacementNm) / unloaded.kT);
	const backward = Float64Array.from(scheme.steps, (st) => ((1 - st.loadFraction) * st.displacementNm) / unloaded.kT);
	return {
		at(F: number) {
			for (let s = 0; s < table.m; s++) {
				table.kPlus[s] = unloaded.kPlus[s] * Math.exp(forward[s] * F);
				table.kMinus[s] = unloaded.kMinus[s] * Math.exp(backward[s] * F);
				table.lnPlus[s] = unloaded.lnPlus[s] + forward[s] * F;
				table.lnMinus[s] = unloaded.lnMinus[s] + backward[s] * F;
			}
			return table;
		}
	};
}

/** Below this a rate may have lost digits to underflow (the smallest normal double is 2.2e-308). */
const TINY = 1e-290;

/** Rates and occupied states of the scheme as given: the parts that must stay in range under any load. */
interface LiveParts {
	plus: Uint8Array;
	minus: Uint8Array;
	occupied: Uint8Array;
}

function liveParts(table: RateTable, known: Float64Array | null): LiveParts {
	let logP: Float64Array;
	try {
		logP = known ?? steadyState(table).logP;
	} catch {
		logP = new Float64Array(table.n);
	}
	return {
		plus: Uint8Array.from(table.kPlus, (k) => (k >= TINY ? 1 : 0)),
		minus: Uint8Array.from(table.kMinus, (k) => (k >= TINY ? 1 : 0)),
		occupied: Uint8Array.from(logP, (x) => (x > -Infinity ? 1 : 0))
	};
}

/** Whether displacements derive from positions of the states along every live step: then no cycle moves, V ≡ 0 [der]. */
function displacementIsPotential(table: RateTable, occupied: Uint8Array): boolean {
	const { n, m, from, to, kPlus, kMinus, displacementNm } = table;
	// steps between states that are ever occupied, with a rate: only they can carry flux
	const live = (s: number) => (kPlus[s] > 0 || kMinus[s] > 0) && occupied[from[s]] === 1 && occupied[to[s]] === 1;
	const head = new Int32Array(n).fill(-1);
	const next = new Int32Array(2 * m);
	const other = new Int32Array(2 * m);
	const sign = new Int8Array(2 * m);
	let scale = 0;
	for (let s = 0; s < m; s++) {
		if (!live(s)) continue;
		scale += Math.abs(displacementNm[s]);
		other[2 * s] = to[s];
		sign[2 * s] = 1;
		next[2 * s] = head[from[s]];
		head[from[s]] = 2 * s;
		other[2 * s + 1] = from[s];
		sign[2 * s + 1] = -1;
		next[2 * s + 1] = head[to[s]];
		head[to[s]] = 2 * s + 1;
	}
	const position = new Float64Array(n);
	const seen = new Uint8Array(n);
	for (let root = 0; root < n; root++) {
		if (seen[root]) continue;
		seen[root] = 1;
		const stack = [root];
		while (stack.length) {
			const i = stack.pop()!;
			for (let e = head[i]; e >= 0; e = next[e]) {
				const j = other[e];
				const x = position[i] + sign[e] * displacementNm[e >> 1];
				if (!seen[j]) {
					seen[j] = 1;
					position[j] = x;
					stack.push(j);
				} else if (Math.abs(position[j] - x) > 1e-12 * scale) return false;
			}
		}
	}
	return true;
}

/** Steps with a zero effective rate, named for the reason. */
function zeroRateSteps(table: RateTable): string[] {
	const out: string[] = [];
	for (let s = 0; s < table.m; s++) if (table.kPlus[s] === 0 || table.kMinus[s] === 0) out.push(`"${table.stepIds[s]}"`);
	return out;
}

function brent(V: (F: number) => number, a: number, b: number, fa: number, fb: number, o: StallOptions): number {
	if (fa === 0) return a;
	if (fb === 0) return b;
	let c = a;
	let fc = fa;
	let d = b - a;
	let e = d;
	for (let it = 0; it < o.maxIterations; it++) {
		if (Math.sign(fb) === Math.sign(fc)) {
			c = a;
			fc = fa;
			d = e = b - a;
		}
		if (Math.abs(fc) < Math.abs(fb)) {
			a = b;
			b = c;
			c = a;
			fa = fb;
			fb = fc;
			fc = fa;
		}
		const tol = 2 * Number.EPSILON * Math.abs(b) + 0.5 * o.toleranceForcePN;
		const mid = 0.5 * (c - b);
		if (Math.abs(mid) <= tol || fb === 0) return b;
		if (Math.abs(e) >= tol && Math.abs(fa) > Math.abs(fb)) {
			const s = fb / fa;
			let P: number;
			let Q: number;
			if (a === c) {
				P = 2 * mid * s;
				Q = 1 - s;
			} else {
				const q = fa / fc;
				const r = fb / fc;
				P = s * (2 * mid * q * (q - r) - (b - a) * (r - 1));
				Q = (q - 1) * (r - 1) * (s - 1);
			}
			if (P > 0) Q = -Q;
			else P = -P;
			if (2 * P < Math.min(3 * mid * Q - Math.abs(tol * Q), Math.abs(e * Q))) {
				e = d;
				d = P / Q;
			} else {
				d = mid;
				e = d;
			}
		} else {
			d = mid;
			e = d;
		}
		a = b;
		fa = fb;
		b += Math.abs(d) > tol ? d : mid > 0 ? tol : -tol;
		fb = V(b);
		// an unevaluable point inside a bracket: fall back to the midpoint of what is known
		if (!Number.isFinite(fb)) return 0.5 * (b + c);
	}
	throw new EngineError('stall', `the stall force did not converge in ${o.maxIterations} iterations; loosen toleranceForcePN`);
}

interface CycleBracket {
	low: number;
	high: number;
	/** every term of V has one sign at every load: +1, −1, or 0 when V ≡ 0 */
	fixedSign: number | null;
	/** largest kBT·|ln k|·/|x| of the terms summed into a cycle stall force, pN (its rounding scale) */
	scalePN: number;
}

/** The exact bracket [min F_κ, max F_κ] from every simple cycle (see the header). */
function cycleBracket(table: RateTable, cycles: Cycle[], F0: number, occupied: Uint8Array): CycleBracket {
	let low = Infinity;
	let high = -Infinity;
	let positive = false;
	let negative = false;
	let finiteCount = 0;
	let scalePN = 0;
	let scale = 0;
	for (let s = 0; s < table.m; s++) scale = Math.max(scale, Math.abs(table.displacementNm[s]));
	for (const cycle of cycles) {
		let x = 0;
		let lnUp = 0;
		let lnDown = 0;
		let size = 0;
		for (const { step, direction } of cycle.steps) {
			size = Math.max(size, Math.abs(table.lnPlus[step]), Math.abs(table.lnMinus[step]));
			x += direction * table.displacementNm[step];
			lnUp += direction === 1 ? table.lnPlus[step] : table.lnMinus[step];
			lnDown += direction === 1 ? table.lnMinus[step] : table.lnPlus[step];
		}
		// a cycle without net displacement adds nothing to V; one with no rate either way, or through a state never
		// occupied (transient), carries no flux
		if (Math.abs(x) <= 1e-12 * scale * cycle.steps.length) continue;
		if (cycle.states.some((i) => occupied[i] !== 1)) continue;
		if (lnUp === -Infinity && lnDown === -Infinity) continue;
		if (lnUp === -Infinity || lnDown === -Infinity) {
			const runs = lnDown === -Infinity ? 1 : -1;
			if (runs * x > 0) positive = true;
			else negative = true;
			continue;
		}
		const Fk = F0 + (table.kT * (lnUp - lnDown)) / x;
		scalePN = Math.max(scalePN, (table.kT * size * cycle.steps.length) / Math.abs(x));
		finiteCount++;
		low = Math.min(low, Fk);
		high = Math.max(high, Fk);
	}
	if (finiteCount === 0) return { low, high, fixedSign: positive === negative ? (positive ? null : 0) : positive ? 1 : -1, scalePN };
	return { low: negative ? -Infinity : low, high: positive ? Infinity : high, fixedSign: null, scalePN };
}

/** Scan grid: uniform over a finite bracket, sinh-spaced (dense near zero load) over the symmetric range. */
function scanGrid(a: number, b: number, intervals: number, symmetric: boolean): number[] {
	const grid: number[] = [];
	if (!symmetric) {
		for (let i = 0; i <= intervals; i++) grid.push(i === intervals ? b : a + ((b - a) * i) / intervals);
		return grid;
	}
	const half = Math.max(1, Math.round(intervals / 2));
	const k = 5; // spacing near zero ≈ range·k/(sinh k·half)
	for (let i = -half; i <= half; i++) grid.push((b * Math.sinh((k * i) / half)) / Math.sinh(k));
	return grid;
}

/**
 * Every sign change of V(F) with its reason when there is none. `options.cycles`, when it is the complete list of
 * simple cycles, gives the exact bracket; otherwise the scan covers ±maxForcePN.
 */
export function stallSearch(scheme: Scheme, options: Partial<StallOptions> = {}): StallSearch {
	const o = { ...STALL_DEFAULTS, ...options };
	const table = effectiveRates(scheme);
	const F0 = scheme.forcePN;
	let evaluations = 0;
	const live = liveParts(table, o.logP);
	const loaded = loadedRates(scheme);
	/** V and its error bound, or null where it cannot be evaluated (no unique steady state, rates out of range) */
	const seen = new Map<number, { v: number; err: number } | null>();
	const evaluate = (F: number): { v: number; err: number } | null => {
		if (seen.has(F)) return seen.get(F)!;
		evaluations++;
		let r: { v: number; err: number } | null;
		try {
			r = loadedVelocity(loaded, F, live);
			if (!Number.isFinite(r.v)) r = null;
		} catch (err) {
			if (!(err instanceof EngineError)) throw err;
			r = null;
		}
		seen.set(F, r);
		return r;
	};
	const V = (F: number) => evaluate(F)?.v ?? NaN;
	const none = (reason: StallReason, message: string, extra: Partial<StallSearch> = {}): StallSearch => ({
		stallForcePN: null,
		stallForcesPN: reason === 'not-searched' ? null : [],
		uncertaintiesPN: reason === 'not-searched' ? null : [],
		searchedPN: null,
		cycleBracketPN: null,
		reason,
		message,
		evaluations,
		...extra
	});

	let dMax = 0;
	for (let s = 0; s < table.m; s++) dMax = Math.max(dMax, Math.abs(table.displacementNm[s]));
	if (dMax === 0 || displacementIsPotential(table, live.occupied))
		return none(
			'no-motion',
			'V is zero at every load: no cycle that can carry flux (nonzero rates, states occupied at steady state) has a net displacement, so the load tilts the equilibrium but moves nothing'
		);
	// beyond this load some rate factor exp(F·d/kBT) leaves the double range
	const cap = Math.min(o.maxForcePN, (600 * table.kT) / dMax);

	let low = -cap;
	let high = cap;
	let knownLow = false;
	let knownHigh = false;
	let cycleBracketPN: [number, number] | null = null;
	if (o.cycles) {
		const br = cycleBracket(table, o.cycles, F0, live.occupied);
		if (br.fixedSign === 0)
			return none('no-motion', 'V is zero at every load: every cycle with a net displacement has a zero rate both ways, so none carries flux');
		if (br.fixedSign !== null) {
			const zero = zeroRateSteps(table);
			return none(
				'irreversible',
				`V is ${br.fixedSign > 0 ? 'positive' : 'negative'} at every load: every cycle that moves the motor is irreversible in the same direction (zero rate on ${zero.slice(0, 3).join(', ')}${zero.length > 3 ? ' …' : ''}), so no load reverses it and V only decays towards zero`
			);
		}
		cycleBracketPN = [br.low, br.high];
		if (br.high - br.low <= o.toleranceForcePN + 8 * Number.EPSILON * Math.max(Math.abs(br.high), br.scalePN)) {
			// every moving cycle stalls at the same load: that load is the one stall force [der]
			const F = 0.5 * (br.low + br.high);
			if (Math.abs(F) > o.maxForcePN)
				return none('out-of-range', `the only stall force, ${fmt(F)} pN, lies beyond the searched range ±${fmt(o.maxForcePN)} pN`, { cycleBracketPN });
			// rounding of the summed logarithms: a few ε of the largest term, over the displacement
			const spread = 0.5 * (br.high - br.low) + 8 * Number.EPSILON * Math.max(Math.abs(F), br.scalePN);
			return { stallForcePN: F, stallForcesPN: [F], uncertaintiesPN: [spread], searchedPN: null, cycleBracketPN, reason: null, message: null, evaluations };
		}
		if (br.low >= -cap) [low, knownLow] = [br.low, true];
		if (br.high <= cap) [high, knownHigh] = [br.high, true];
		if (low > high || (br.low > cap && br.high > cap) || (br.low < -cap && br.high < -cap))
			return none(
				'out-of-range',
				`the cycles' own stall forces span ${fmt(br.low)} … ${fmt(br.high)} pN, beyond the searched range ±${fmt(cap)} pN, so every stall force lies there`,
				{ cycleBracketPN }
			);
	}

	const grid = scanGrid(low, high, o.gridIntervals, !o.cycles);
	if (table.n ** 3 * grid.length > o.maxWork)
		return none(
			'not-searched',
			`stall force not searched: a load scan of ${table.n} states needs about ${grid.length} steady states, past the work budget; the audit page computes it on request`,
			{ stallForcesPN: null }
		);
	const F: number[] = [];
	const v: number[] = [];
	const sign: number[] = [];
	let lost = 0;
	for (const x of grid) {
		const r = evaluate(x);
		if (!r) continue;
		if (r.err === Infinity) lost++;
		F.push(x);
		v.push(r.v);
		// a sign is known beyond the error bound, or exactly at a bracket end from the cycles [der]
		if (x === low && knownLow) sign.push(1);
		else if (x === high && knownHigh) sign.push(-1);
		else sign.push(Math.abs(r.v) > r.err ? Math.sign(r.v) : 0);
	}
	if (F.length === 0)
		return none('not-evaluable', `V could not be evaluated at any load between ${fmt(low)} and ${fmt(high)} pN (no unique steady state or rates out of range)`);
	const searchedPN: [number, number] = [F[0], F[F.length - 1]];
	if (sign.every((x) => x === 0) && lost > 0)
		return none(
			'not-evaluable',
			`the sign of V is unknown at every searched load (${fmt(searchedPN[0])} … ${fmt(searchedPN[1])} pN): rates or probabilities underflow at ${lost} of them and V is within its rounding error at the rest`,
			{ searchedPN, cycleBracketPN }
		);
	if (sign.every((x) => x === 0))
		return none(
			'no-motion',
			`V is zero within its rounding error at every searched load (${fmt(searchedPN[0])} … ${fmt(searchedPN[1])} pN): no cycle that moves the motor carries flux`,
			{ searchedPN, cycleBracketPN }
		);

	const roots: { root: number; a: number; b: number }[] = [];
	const refine = (a: number, b: number, fa: number, fb: number) => roots.push({ root: brent(V, a, b, fa, fb, o), a, b });
	// golden-section probe of each dip of |V| that keeps one sign: two close roots hide there
	for (let i = 1; i + 1 < F.length; i++) {
		const s = sign[i];
		if (s === 0 || sign[i - 1] !== s || sign[i + 1] !== s) continue;
		if (!(Math.abs(v[i]) < Math.abs(v[i - 1]) && Math.abs(v[i]) < Math.abs(v[i + 1]))) continue;
		if (!deepDip(F[i - 1], F[i], F[i + 1], s * v[i - 1], s * v[i], s * v[i + 1])) continue;
		const probe = goldenDip(evaluate, F[i - 1], F[i + 1], s);
		if (probe !== null) {
			refine(F[i - 1], probe.F, v[i - 1], probe.v);
			refine(probe.F, F[i + 1], probe.v, v[i + 1]);
		}
	}
	// every pair of neighbouring known signs that differ brackets one root (points of unknown sign between them are skipped)
	let last = -1;
	for (let i = 0; i < F.length; i++) {
		if (sign[i] === 0) continue;
		if (last >= 0 && sign[i] === -sign[last]) {
			const fa = Math.sign(v[last]) === sign[last] ? v[last] : sign[last] * Number.MIN_VALUE;
			const fb = Math.sign(v[i]) === sign[i] ? v[i] : sign[i] * Number.MIN_VALUE;
			refine(F[last], F[i], fa, fb);
		}
		last = i;
	}
	roots.sort((x, y) => x.root - y.root);
	// each root's uncertainty: where |V| ≤ its error bound around it, over the slope of V there. The slope comes from
	// points a hundredth of the bracket apart (closer ones would measure the rounding), capped by the bracket's secant.
	const uncertainty = ({ root, a, b }: { root: number; a: number; b: number }) => {
		const h = 0.01 * (b - a); // bracket ends and the root itself were evaluated already
		const [left, mid, right, A, B] = [evaluate(root - h), evaluate(root), evaluate(root + h), evaluate(a), evaluate(b)];
		if (!left || !mid || !right || !A || !B) return b - a;
		const slope = Math.min(Math.abs(right.v - left.v) / (2 * h), Math.abs(B.v - A.v) / (b - a));
		const err = Math.max(mid.err, left.err, right.err);
		return Math.min(b - a, Math.max(o.toleranceForcePN, slope > 0 ? err / slope : b - a));
	};
	const forces: number[] = [];
	const uncertaintiesPN: number[] = [];
	for (const found of roots) {
		const r = found.root;
		const u = uncertainty(found);
		// two roots within each other's uncertainty are one
		if (forces.length && r - forces[forces.length - 1] <= Math.max(u, uncertaintiesPN[uncertaintiesPN.length - 1], 2 * o.toleranceForcePN)) continue;
		forces.push(r);
		uncertaintiesPN.push(u);
	}
	if (forces.length === 0) {
		const dir = sign.find((x) => x !== 0)! > 0 ? 'positive' : 'negative';
		const range = `${fmt(searchedPN[0])} … ${fmt(searchedPN[1])} pN`;
		const zero = zeroRateSteps(table);
		const clipped = searchedPN[0] > -o.maxForcePN || searchedPN[1] < o.maxForcePN ? ` (beyond it rates leave the double range)` : '';
		if (zero.length)
			return none(
				'irreversible',
				`V stays ${dir} at every searched load (${range}): step(s) ${zero.slice(0, 3).join(', ')}${zero.length > 3 ? ' …' : ''} have a zero rate, so the motor cannot be driven backwards through them and V only decays towards zero`,
				{ searchedPN, cycleBracketPN }
			);
		return none(
			'out-of-range',
			`V stays ${dir} over the searched range ${range}${clipped}; with every rate positive V reverses at some finite load, so the stall force lies beyond it`,
			{ searchedPN, cycleBracketPN }
		);
	}
	let nearest = forces[0];
	for (const x of forces) if (Math.abs(x) < Math.abs(nearest) || (Math.abs(x) === Math.abs(nearest) && x > nearest)) nearest = x;
	return {
		stallForcePN: nearest,
		stallForcesPN: forces,
		uncertaintiesPN,
		searchedPN,
		cycleBracketPN,
		reason: null,
		message:
			forces.length > 1
				? `V changes sign ${forces.length} times, at ${forces.map(fmt).join(', ')} pN: the cycles compete and the motor has several stall states; stallForcePN is the one nearest zero load`
				: null,
		evaluations
	};
}

/**
 * Whether a dip of s·V > 0 at x1 between x0 and x2 may cross zero: it is deep against its neighbours, or the
 * parabola through the three points goes below zero. Shallow dips of a smooth V are left alone.
 */
function deepDip(x0: number, x1: number, x2: number, y0: number, y1: number, y2: number): boolean {
	if (y1 < 0.5 * Math.min(y0, y2)) return true;
	const d01 = (y1 - y0) / (x1 - x0);
	const d12 = (y2 - y1) / (x2 - x1);
	const curvature = (d12 - d01) / (x2 - x0); // half the second derivative
	if (!(curvature > 0)) return false;
	const slope = d01 + curvature * (x1 - x0); // of the parabola, at x1
	return y1 - (slope * slope) / (4 * curvature) < 0;
}

/** Minimum of s·V on [a, b] by golden sections; the point where V has the other sign, or null. */
function goldenDip(
	evaluate: (F: number) => { v: number; err: number } | null,
	a: number,
	b: number,
	s: number
): { F: number; v: number } | null {
	const g = (Math.sqrt(5) - 1) / 2;
	// s·V at x, and whether V there has the other sign beyond its error
	const at = (x: number) => {
		const r = evaluate(x);
		return r ? { f: s * r.v, flipped: s * r.v < -r.err, v: r.v } : null;
	};
	let x1 = b - g * (b - a);
	let x2 = a + g * (b - a);
	let r1 = at(x1);
	let r2 = at(x2);
	for (let it = 0; it < 16 && r1 && r2; it++) {
		if (r1.flipped) return { F: x1, v: r1.v };
		if (r2.flipped) return { F: x2, v: r2.v };
		if (r1.f < r2.f) {
			b = x2;
			x2 = x1;
			r2 = r1;
			x1 = b - g * (b - a);
			r1 = at(x1);
		} else {
			a = x1;
			x1 = x2;
			r1 = r2;
			x2 = a + g * (b - a);
			r2 = at(x2);
		}
	}
	return null;
}

/** The stall force nearest zero load, or an EngineError that names the reason there is none. */
export function stallForce(scheme: Scheme, options: Partial<StallOptions> = {}): number {
	const found = stallSearch(scheme, options);
	if (found.stallForcePN === null) throw new EngineError('stall', `no stall force: ${found.message}`);
	return found.stallForcePN;
}
