import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
	AVOGADRO_PER_MOL,
	BOLTZMANN_J_PER_K,
	GAS_CONSTANT_J_PER_MOL_K,
	kJPerMolToPNnm,
	molarThermalEnergyKJPerMol,
	thermalEnergyPNnm
} from './units';

const codata = JSON.parse(readFileSync(new URL('../../../reference/codata-2018.json', import.meta.url), 'utf8'));

describe('constants — CODATA 2018, exact in the 2019 SI [pub]', () => {
	it('kB and N_A are the exact defining values', () => {
		expect(BOLTZMANN_J_PER_K).toBe(codata.boltzmannJPerK);
		expect(AVOGADRO_PER_MOL).toBe(codata.avogadroPerMol);
		expect(GAS_CONSTANT_J_PER_MOL_K).toBeCloseTo(8.314462618, 9); // R = kB·N_A, CODATA 2018 [pub]
	});

	it.each(codata.derived.kTpNnm as { temperatureK: number; value: number }[])(
		'kB·T at $temperatureK K is $value pN·nm [pub]',
		({ temperatureK, value }) => {
			expect(Math.abs(thermalEnergyPNnm(temperatureK) / value - 1)).toBeLessThan(codata.derived.relativeTolerance);
		}
	);

	it.each(codata.derived.RTkJPerMol as { temperatureK: number; value: number }[])(
		'R·T at $temperatureK K is $value kJ/mol [pub]',
		({ temperatureK, value }) => {
			expect(Math.abs(molarThermalEnergyKJPerMol(temperatureK) / value - 1)).toBeLessThan(codata.derived.relativeTolerance);
		}
	);

	it('a molar free energy of R·T per mole is kB·T per event [der]', () => {
		const T = 310.15;
		expect(kJPerMolToPNnm(molarThermalEnergyKJPerMol(T)) / thermalEnergyPNnm(T)).toBeCloseTo(1, 14);
	});
});
