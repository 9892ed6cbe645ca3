/**
 * Units that labs write, converted to the scheme's own: rates per M and per second, kelvin, kJ/mol,
 * nanometres, piconewtons, mol/L.
 *
 * kBT and RT per mole are the same energy: R·T with R = kB·N_A (CODATA 2018, exact since the 2019 SI).
 * 1 kcal = 4.184 kJ (thermochemical calorie). 1 Å = 0.1 nm.
 * Each function returns a factor or a conversion, or an error message that says what to write instead.
 */

export const BOLTZMANN_J_PER_K = 1.380649e-23;
export const AVOGADRO_PER_MOL = 6.02214076e23;
export const GAS_CONSTANT_J_PER_MOL_K = BOLTZMANN_J_PER_K * AVOGADRO_PER_MOL;
export const KCAL_IN_KJ = 4.184;

export type Conversion<T> = { ok: true; value: T } | { ok: false; message: string };

function clean(unit: string): string {
	return unit
		.normalize('NFC')
		.replace(/\u212b/g, 'Å')
		.replace(/\u03bc/g, 'µ')
		.replace(/\s+/g, ' ')
		.trim();
}

const CONCENTRATION_IN_M: Record<string, number> = { M: 1, mM: 1e-3, 'µM': 1e-6, uM: 1e-6, nM: 1e-9, pM: 1e-12 };

/** Molar factor of a concentration unit (M, mM, µM, nM, pM): value·factor = mol/L. */
export function concentrationFactor(unit: string | null): Conversion<number> {
	const u = clean(unit ?? '');
	if (u === '') return { ok: true, value: 1 };
	const f = CONCENTRATION_IN_M[u] ?? (/^mol\s*\/\s*l$/i.test(u) ? 1 : undefined);
	if (f !== undefined) return { ok: true, value: f };
	return { ok: false, message: `"${unit}" is not a concentration unit we read. Use M, mM, µM, nM or pM.` };
}

/**
 * The concentration unit of a second-order rate written in a header, e.g. "1/s or 1/(µM·s)",
 * "µM⁻¹ s⁻¹", "per µM per s". Returns the factor that turns the written value into per M per s
 * (for each species bound): 1e6 for per µM.
 */
export function secondOrderFactor(unit: string | null): Conversion<number> {
	const u = clean(unit ?? '');
	if (u === '') return { ok: true, value: 1 };
	if (/(^|[^a-z])(min|ms|h|hr)([^a-z]|$)/i.test(u)) {
		return { ok: false, message: `Rates must be per second; the header says "${unit}". Convert the column to 1/s (and per M or per µM for binding steps) and write that in the header.` };
	}
	const found = new Set<string>();
	for (const m of u.matchAll(/(?<![A-Za-z])(mM|µM|uM|nM|pM|M)(?![A-Za-z])/g)) found.add(m[1] === 'uM' ? 'µM' : m[1]);
	if (found.size > 1) {
		return { ok: false, message: `The header "${unit}" names more than one concentration unit (${[...found].join(', ')}). Write one, e.g. "1/s or 1/(µM·s)".` };
	}
	if (found.size === 0) return { ok: true, value: 1 };
	const [c] = [...found];
	return { ok: true, value: 1 / CONCENTRATION_IN_M[c] };
}

/** Temperature in kelvin from K or °C. */
export function toKelvin(value: number, unit: string | null): Conversion<number> {
	const u = clean(unit ?? '').replace(/^deg\s*/i, '°').toLowerCase();
	let k: number;
	if (u === '' || u === 'k' || u === 'kelvin') k = value;
	else if (u === '°c' || u === 'c' || u === 'celsius' || u === '℃') k = value + 273.15;
	else return { ok: false, message: `"${unit}" is not a temperature unit we read. Use K or °C.` };
	if (!(k > 0)) return { ok: false, message: `The temperature ${value} ${unit ?? 'K'} is at or below absolute zero. Check the value and its unit (K or °C).` };
	return { ok: true, value: k };
}

/** A free energy in kJ/mol from kJ/mol, kcal/mol, J/mol or kBT (= RT per mole) at temperature T. */
export function toKJPerMol(value: number, unit: string | null, temperatureK: number): Conversion<number> {
	const u = clean(unit ?? '').toLowerCase().replace(/[·*\s_]/g, '').replace(/−/g, '-');
	if (u === '' || u === 'kj/mol' || u === 'kjmol-1' || u === 'kj') return { ok: true, value };
	if (u === 'kcal/mol' || u === 'kcalmol-1' || u === 'kcal') return { ok: true, value: value * KCAL_IN_KJ };
	if (u === 'j/mol' || u === 'jmol-1') return { ok: true, value: value / 1000 };
	if (u === 'kbt' || u === 'kt' || u === 'rt') {
		return { ok: true, value: (value * GAS_CONSTANT_J_PER_MOL_K * temperatureK) / 1000 };
	}
	return { ok: false, message: `"${unit}" is not a free-energy unit we read. Use kJ/mol, kcal/mol or kBT.` };
}

/** A length in nm from nm, Å, pm or µm. */
export function lengthFactor(unit: string | null): Conversion<number> {
	const u = clean(unit ?? '');
	const lower = u.toLowerCase();
	if (u === '' || lower === 'nm') return { ok: true, value: 1 };
	if (u === 'Å' || lower === 'angstrom' || lower === 'ångström' || u === 'A') return { ok: true, value: 0.1 };
	if (lower === 'pm') return { ok: true, value: 1e-3 };
	if (u === 'µm' || lower === 'um') return { ok: true, value: 1e3 };
	return { ok: false, message: `"${unit}" is not a length unit we read. Use nm or Å.` };
}

/** A force in pN from pN or fN. */
export function forceFactor(unit: string | null): Conversion<number> {
	const u = clean(unit ?? '');
	if (u === '' || u === 'pN') return { ok: true, value: 1 };
	if (u === 'fN') return { ok: true, value: 1e-3 };
	if (u === 'nN') return { ok: true, value: 1e3 };
	return { ok: false, message: `"${unit}" is not a force unit we read. Use pN.` };
}
