/**
 * Physical constants and unit conversions used by every other engine module.
 *
 * Source: CODATA 2018 recommended values, exact since the 2019 revision of the SI [pub]
 * (Tiesinga et al., Rev Mod Phys 93:025010, 2021).
 * Cost: O(1).
 * Invariants: energies inside the engine are in pN·nm (1 pN·nm = 1e-21 J); rates in s⁻¹;
 * concentrations in mol/L; forces in pN; lengths in nm.
 */

/** Boltzmann constant, J/K (exact). */
export const BOLTZMANN_J_PER_K = 1.380649e-23;
/** Avogadro constant, 1/mol (exact). */
export const AVOGADRO_PER_MOL = 6.02214076e23;
/** Molar gas constant R = kB·N_A, J/(mol·K). */
export const GAS_CONSTANT_J_PER_MOL_K = BOLTZMANN_J_PER_K * AVOGADRO_PER_MOL;

/** Thermal energy kB·T in pN·nm. */
export function thermalEnergyPNnm(temperatureK: number): number {
	return BOLTZMANN_J_PER_K * temperatureK * 1e21;
}

/** Molar thermal energy R·T in kJ/mol. */
export function molarThermalEnergyKJPerMol(temperatureK: number): number {
	return (GAS_CONSTANT_J_PER_MOL_K * temperatureK) / 1000;
}

/** A molar free energy (kJ/mol) as the energy of one event, in pN·nm. */
export function kJPerMolToPNnm(kJPerMol: number): number {
	return ((kJPerMol * 1000) / AVOGADRO_PER_MOL) * 1e21;
}
