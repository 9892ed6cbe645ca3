import { lusolve } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { enumerateCycles } from './cycles';
import { cycleFluxes } from './fluxes';
import { preciseAnalysis } from './precise';
import { effectiveRates } from './rates';
import { plainStep, randomScheme, type RandomSchemeOptions } from './random-scheme';
import { steadyState } from './steady-state';
import { bruteForceTreeSums, enumerateForests } from './trees';
import { judgeCycle } from './consistency';
import { chemistryModel } from './chemistry';
import type { Scheme } from './scheme';

const TOL = 1e-10; // issue 3 §4: relative error on every probability and every one-way cycle flux

function fastPath(scheme: Scheme) {
	const table = effectiveRates(scheme);
	const ss = steadyState(table);
	const { cycles } = enumerateCycles(table);
	const chem = chemistryModel(scheme, table.kT);
	const js = cycles.map((c) => judgeCycle(c, table, chem, scheme));
	const fl = cycleFluxes(
		ss.K,
		table.n,
		ss.logSigma,
		cycles,
		js.map((j) => j.lnForward),
		js.map((j) => j.lnBackward)
	);
	return { table, ss, cycles, fl };
}

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

const families: [string, Partial<RandomSchemeOptions>][] = [
	['moderate', { log10Rates: [-1, 3] }],
	['stiff, rates over 16 orders of magnitude', { log10Rates: [-8, 8] }],
	['nearly decomposable, clusters joined by steps 1e-9 … 1e-7', { log10Rates: [2, 4], clusters: 3, log10SlowRates: [-9, -7] }]
];

describe('fast path against brute-force trees and 80-digit decimals on seeded random schemes', () => {
	for (const [family, opts] of families)
		it.each([1, 2, 3, 4, 5, 6, 7, 8])(`${family}: seed %i — tree theorem (King & Altman 1956; Hill 1966) [pub]`, (seed) => {
			const states = 4 + (seed % 4);
			const scheme = randomScheme({ ...opts, states, steps: states + 2 + (seed % 3), seed });
			const { table, ss, cycles, fl } = fastPath(scheme);
			const precise = preciseAnalysis(scheme, cycles);
			const brute = bruteForceTreeSums(table);
			const bruteSigma = brute.reduce((t, v) => t + v, 0);
			for (let i = 0; i < table.n; i++) {
				const p = precise.probabilities[i].toNumber();
				expect(rel(ss.p[i], p)).toBeLessThan(TOL);
				expect(rel(brute[i] / bruteSigma, p)).toBeLessThan(TOL);
			}
			expect(cycles.length).toBeGreaterThan(0);
			cycles.forEach((cycle, c) => {
				const jf = precise.forwardFlux[c].toNumber();
				const jb = precise.backwardFlux[c].toNumber();
				expect(rel(fl.forward[c], jf)).toBeLessThan(TOL);
				expect(rel(fl.backward[c], jb)).toBeLessThan(TOL);
				// brute force Σ_κ: forests directed into the cycle's states (Chaiken 1982) [pub]
				const sk = cycle.states.length === table.n ? 1 : enumerateForests(table, cycle.states).weightSum;
				expect(rel(Math.exp(fl.logSigmaCycle[c]), sk)).toBeLessThan(TOL);
			});
		});

	it('keeps tiny probabilities (down to 1e-30 and below) to full relative accuracy', () => {
		const scheme = ladder(5, 3, 1e-6, 1e3);
		const { ss } = fastPath(scheme);
		const precise = preciseAnalysis(scheme);
		const smallest = Math.min(...ss.p);
		expect(smallest).toBeLessThan(1e-30);
		ss.p.forEach((p, i) => expect(rel(p, precise.probabilities[i].toNumber())).toBeLessThan(TOL));
	});
});

/** Clusters of `size` fast states in a row; each cluster is entered at `slow` and left back at `fast`. */
function ladder(clusters: number, size: number, slow: number, fast: number): Scheme {
	const n = clusters * size;
	const scheme = randomScheme({ states: n, steps: n - 1, seed: 99 });
	scheme.steps = [];
	let s = 0;
	const add = (a: number, b: number, kf: number, kb: number) => scheme.steps.push(plainStep(`s${s++}`, `S${a}`, `S${b}`, kf, kb));
	for (let c = 0; c < clusters; c++) {
		for (let i = 1; i < size; i++) add(c * size + i - 1, c * size + i, fast * (1 + i), fast / (1 + i));
		add(c * size, c * size + size - 1, fast, 2 * fast); // close a fast loop inside the cluster
		if (c + 1 < clusters) add(c * size + size - 1, (c + 1) * size, slow, fast);
	}
	return scheme;
}

describe('a plain dense LU solve fails where GTH does not', () => {
	// four fast clusters (rates 1e2…1e4 s⁻¹) joined by steps of 1e-16…1e-14 s⁻¹: nearly decomposable
	it.each([1, 2, 4, 6])('seed %i: mathjs lusolve gives negative probabilities; GTH matches 80 digits', (seed) => {
		const scheme = randomScheme({ clusters: 4, log10Rates: [2, 4], log10SlowRates: [-16, -14], states: 12, steps: 24, seed });
		const table = effectiveRates(scheme);
		const n = table.n;
		const { K, p } = steadyState(table);
		// Lᵀ p = 0 with the first equation replaced by Σ p = 1
		const A = Array.from({ length: n }, (_, i) =>
			Array.from({ length: n }, (_, j) => {
				if (i === 0) return 1;
				if (i === j) {
					let out = 0;
					for (let k = 0; k < n; k++) out += K[i * n + k];
					return out;
				}
				return -K[j * n + i];
			})
		);
		const b = Array.from({ length: n }, (_, i) => [i === 0 ? 1 : 0]);
		const lu = (lusolve(A, b) as number[][]).map((r) => r[0]);
		expect(Math.min(...lu)).toBeLessThan(0);
		const precise = preciseAnalysis(scheme).probabilities;
		p.forEach((pi, i) => {
			expect(pi).toBeGreaterThan(0);
			expect(rel(pi, precise[i].toNumber())).toBeLessThan(TOL);
		});
	});
});
